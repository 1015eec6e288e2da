// Field rules shared by pages and the API (zod). Messages are written for people.
import { z } from "zod";
import { ROLES } from "./permissions";

const noMarkup = (label: string) => (v: string) => !/[<>]/.test(v) || `${label} cannot contain < or >.`;

export const personName = z
  .string({ error: "Enter a name." })
  .trim()
  .min(1, "Enter a name.")
  .max(120, "Names are at most 120 characters.")
  .refine((v) => !/[<>]/.test(v), { message: "Names cannot contain < or >." });

export const email = z
  .string({ error: "Enter an e-mail address." })
  .trim()
  .toLowerCase()
  .max(320, "E-mail addresses are at most 320 characters.")
  .pipe(z.email({ error: "That is not an e-mail address." }));

export const password = z
  .string({ error: "Enter a password." })
  .min(10, "Passwords are at least 10 characters.")
  .max(200, "Passwords are at most 200 characters.");

export const role = z.enum(ROLES, { error: `Choose a role: ${ROLES.join(", ")}.` });

export const projectFields = z.object({
  name: z
    .string({ error: "Enter a project name." })
    .trim()
    .min(2, "Project names are at least 2 characters.")
    .max(120, "Project names are at most 120 characters.")
    .refine((v) => noMarkup("Project names")(v) === true, { message: "Project names cannot contain < or >." }),
  summary: z.string().trim().max(2000, "The summary is at most 2000 characters.").default(""),
  crsEpsg: z.coerce
    .number({ error: "Enter the EPSG code of a projected CRS in metres." })
    .int("EPSG codes are whole numbers.")
    .min(1024, "That is not an EPSG code of a projected CRS.")
    .max(999999, "That is not an EPSG code of a projected CRS."),
});

export const invitationFields = z.object({ email, role });

export const tokenName = z.string().trim().min(1, "Name the token (what will use it).").max(80, "Token names are at most 80 characters.");

/** A community's name as custodians are recorded (empty clears it). */
export const communityName = z
  .string()
  .trim()
  .max(120, "Community names are at most 120 characters.")
  .refine((v) => !/[<>]/.test(v), { message: "Community names cannot contain < or >." })
  .transform((v) => (v === "" ? null : v));
