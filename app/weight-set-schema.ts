// The shape of a weight set's content at the edge (zod), shared by the API, the pages and the
// browser: the shape first, then its meaning through `checkWeightSetContent` (app/scoring), whose
// messages name the factor or control point at fault.
import { z } from "zod";
import { FACTOR_IDS, type FactorId } from "./scoring/factors";
import { ScoringInputError } from "./scoring/errors";
import { checkWeightSetContent, type WeightSetContent } from "./scoring/weight-set";
import type { FactorCurve } from "./scoring/factor-curves";

const num = (what: string) => z.number({ error: `${what} must be a number.` }).refine((v) => Number.isFinite(v), { message: `${what} must be a finite number.` });

export const factorCurveSchema: z.ZodType<FactorCurve> = z.union([
  z.object({ kind: z.literal("linear"), direction: z.literal("increasing"), zeroUntil: num("zeroUntil"), fullAt: num("fullAt") }).strict(),
  z.object({ kind: z.literal("linear"), direction: z.literal("decreasing"), fullUntil: num("fullUntil"), zeroAt: num("zeroAt") }).strict(),
  z.object({ kind: z.literal("sigmoid"), direction: z.literal("increasing"), zeroUntil: num("zeroUntil"), fullAt: num("fullAt") }).strict(),
  z.object({ kind: z.literal("sigmoid"), direction: z.literal("decreasing"), fullUntil: num("fullUntil"), zeroAt: num("zeroAt") }).strict(),
  z.object({ kind: z.literal("j-shaped"), direction: z.literal("increasing"), halfAt: num("halfAt"), fullAt: num("fullAt") }).strict(),
  z.object({ kind: z.literal("j-shaped"), direction: z.literal("decreasing"), fullUntil: num("fullUntil"), halfAt: num("halfAt") }).strict(),
  z.object({ kind: z.literal("band"), shape: z.enum(["linear", "sigmoid"]), zeroUntil: num("zeroUntil"), fullAt: num("fullAt"), fullUntil: num("fullUntil"), zeroAt: num("zeroAt") }).strict(),
  z.object({ kind: z.literal("aspect"), preferredDeg: num("preferredDeg"), widthDeg: num("widthDeg"), flatValue: num("flatValue") }).strict(),
], { error: "A curve is linear, sigmoid or j-shaped (increasing or decreasing, with its two control points), a band (four points) or an aspect preference." });

const weight = (what: string) => num(`The weight of ${what}`).refine((v) => v >= 0, { message: `The weight of ${what} must be 0 or more.` });

const factorId = z.enum(FACTOR_IDS as [FactorId, ...FactorId[]], { error: `A factor is one of: ${FACTOR_IDS.join(", ")}.` });

export const weightSetContentSchema: z.ZodType<WeightSetContent> = z
  .object({
    factors: z.array(z.object({ factor: factorId, weight: weight("a factor"), curve: factorCurveSchema }).strict()).min(1, "A weight set needs at least one factor.").max(FACTOR_IDS.length),
    preservation: z
      .object({
        enabled: z.boolean(),
        baseLevel: z.object({ weight: weight("the base-level part"), curve: factorCurveSchema }).strict(),
        shorefaceErosion: z.object({ weight: weight("the shoreface-erosion part"), erosionDepthM: num("The erosion depth"), curve: factorCurveSchema }).strict(),
        shelter: z.object({ weight: weight("the shelter part"), curve: factorCurveSchema }).strict(),
        evidenceRadiusM: num("The evidence radius"),
      })
      .strict(),
    periods: z
      .array(z.object({ name: z.string().trim().min(1, "Every period needs a name.").max(80, "Period names are at most 80 characters."), youngKa: num("A period's young end"), oldKa: num("A period's old end"), rule: z.enum(["zero", "skip"]) }).strict())
      .max(20, "At most 20 periods."),
    ahp: z.object({ factors: z.array(factorId).min(2).max(10), upper: z.array(num("A judgement")).max(45) }).strict().nullable(),
    shelterRadiusM: num("The shelter radius"),
  })
  .strict()
  .superRefine((content, ctx) => {
    try {
      checkWeightSetContent(content as WeightSetContent);
    } catch (e) {
      if (e instanceof ScoringInputError) ctx.addIssue({ code: "custom", message: e.message, path: e.field ? [e.field] : [] });
      else throw e;
    }
  }) as unknown as z.ZodType<WeightSetContent>;
