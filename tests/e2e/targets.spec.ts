import { readFileSync } from "node:fs";
import { test, expect, stateFor, demoReconstructionPublished, scoreAdoptedVersion } from "./fixtures";

// Core targets on the demo (the invented Corrastan Shelf): the lead scores the adopted weight set for
// the "Early Holocene coast" period (through the API, as validation.spec.ts does), then on the Core
// targets page makes a constrained list mixing a transect across a typed axis (along the chirp line
// at y = 5 024 300), best-first targets and control cores in the two lowest classes; the list is
// ordered into a cruise plan from a port on the west coast that fits one 12-hour ship day; the lead
// publishes it and downloads the CSV, which carries the cautions and one row per target; then records
// a core and its result (archaeological material, dated 11.0–10.5 ka cal BP) on the page, and the
// next validation of the scoring counts it as one more presence.

test.describe("core targets as the lead", () => {
  test.use({ storageState: stateFor("lead") });
  test.setTimeout(300_000);

  test("the lead makes a mixed list, plans the cruise within the ship days, publishes it and downloads the CSV", async ({ page, baseURL }) => {
    const reconstructionId = Number(await demoReconstructionPublished(page));
    const projectId = /\/projects\/(\d+)/.exec(page.url())![1];
    const scoringId = await scoreAdoptedVersion(page.request, baseURL!, projectId, reconstructionId, { kind: "period", name: "Early Holocene coast" });

    await page.goto(`/projects/${projectId}`);
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Core targets", exact: true }).click();
    await expect(page.getByRole("heading", { name: "Core targets", level: 1 })).toBeVisible();
    const form = page.getByRole("form", { name: "Make a target list" });
    await form.getByLabel("Name", { exact: true }).fill("Velmar cruise A");
    await form.getByLabel("Ranked on").selectOption(`scoring:${scoringId}`);
    await form.getByLabel("Within this of a survey line (m)").fill("250");
    await form.getByLabel("Unassessed horizon").selectOption("core-to-refusal");
    await form.getByLabel("Minimum spacing (m)").fill("200");
    await form.getByLabel("Include a transect").check();
    await form.getByLabel("Axis points (x y; x y — project CRS)").fill("482000 5024300; 490000 5024300");
    await form.getByLabel("Transect name").fill("Chirp line 2 crossing");
    await form.getByLabel("Feature width (m)").fill("100");
    await form.getByLabel("Margin width (m)").fill("100");
    await form.getByLabel("Half-length (m)").fill("200");
    await form.getByLabel("Station spacing (m)").fill("200");
    await form.getByLabel("Cross at (m along the axis)").fill("3000, 5000");
    await form.getByLabel("Best first").fill("8");
    await form.getByLabel("Control cores").fill("3");
    await form.getByLabel("Learn most").fill("0");
    await form.getByLabel("Port", { exact: true }).fill("Velmar harbour");
    await form.getByLabel("Port x (m)").fill("480000");
    await form.getByLabel("Port y (m)").fill("5023600");
    await form.getByLabel("Transit speed (kn)").fill("8");
    await form.getByLabel("Station time per core (h)").fill("1.5");
    await form.getByLabel("Ship days").fill("1");
    await form.getByLabel("Working hours per day").fill("12");
    await form.getByRole("button", { name: "Make the list" }).click();

    await expect(page.getByRole("heading", { name: "Velmar cruise A", level: 1 })).toBeVisible({ timeout: 60_000 });
    const table = page.getByRole("table", { name: "Core targets" });
    const rows = table.locator("tbody tr");
    const total = await rows.count();
    expect(total).toBeGreaterThanOrEqual(3);
    for (const mode of ["transect", "best-first", "control"]) await expect(rows.filter({ hasText: mode }).first()).toBeVisible();

    // the cruise plan fits the ship day: no more cores than the list holds, hours within 12
    const plan = page.getByTestId("plan-summary");
    await expect(plan).toContainText("The plan fits.");
    const m = /(\d+) cores fit 1 ship day — ([\d.]+) h of ([\d.]+) h/.exec((await plan.textContent())!.replace(/\s+/g, " "));
    expect(m, (await plan.textContent()) ?? "").not.toBeNull();
    expect(Number(m![1])).toBeGreaterThan(0);
    expect(Number(m![1])).toBeLessThanOrEqual(total);
    expect(Number(m![2])).toBeLessThanOrEqual(Number(m![3]));
    expect(Number(m![3])).toBe(12);

    await page.getByRole("button", { name: "Publish the list" }).click();
    await expect(page.getByRole("status")).toContainText("Published");
    await expect(page.getByText(/Published .* unchangeable; hash [0-9a-f]{16}/)).toBeVisible();
    await expect(page.getByRole("button", { name: "Publish the list" })).toHaveCount(0);

    const link = page.getByRole("link", { name: "CSV", exact: true });
    const direct = await page.request.get((await link.getAttribute("href"))!);
    expect(direct.status(), await direct.text()).toBe(200);
    expect(direct.headers()["content-disposition"]).toMatch(/attachment; filename=".*\.csv"/);
    const [download] = await Promise.all([page.waitForEvent("download"), link.click()]);
    const csv = readFileSync((await download.path())!, "utf8");
    expect(csv).toContain("# - Model output is a planning aid: a low score is not evidence of absence.");
    const lines = csv.split("\r\n").filter((l) => l && !l.startsWith("#"));
    expect(lines[0]).toMatch(/^rank,waypoint,status,mode,mode_detail,x_m,y_m,epsg,lat,lon,lat_ddm,lon_ddm,/);
    expect(lines).toHaveLength(total + 1);
    expect(lines.slice(1).some((l) => l.includes(",transect,"))).toBe(true);
    expect(lines.slice(1).some((l) => l.includes(",control,"))).toBe(true);

    // a core and its result recorded on the page change the next validation of the scoring
    const listId = /\/targets\/(\d+)/.exec(page.url())![1];
    const before = (await (await page.request.get(`/api/scorings/${scoringId}/validation`)).json()) as { validation: { inputsHash: string; evidence: Array<{ key: string; used: boolean }> } };
    const first = (await (await page.request.get(`/api/target-lists/${listId}`)).json()) as { targets: Array<{ id: number; waypoint: string; mode: string }> };
    const t = first.targets.find((x) => x.mode === "best-first")!;
    const row = table.locator(`tr[data-waypoint="${t.waypoint}"]`);
    await row.getByText("Record the core").click();
    await row.getByLabel("Penetration (m)").fill("3.2");
    await row.getByLabel("Recovery (m)").fill("2.8");
    await row.getByLabel("Horizon reached").selectOption("yes");
    await row.getByRole("button", { name: "Save" }).click();
    await expect(page.getByRole("status")).toContainText(`${t.waypoint} is now cored.`);
    await row.getByText("Record the result").click();
    await row.getByLabel("Preserved land surface").selectOption("yes");
    await row.getByLabel("Archaeological indicators (empty: none)").fill("charcoal; burnt flint");
    await row.getByLabel("Calibrated range cal BP, older–younger").fill("11000-10500");
    await row.getByRole("button", { name: "Save" }).click();
    await expect(page.getByRole("status")).toContainText(`${t.waypoint} is now result.`);
    await expect(row.locator("[data-status]")).toHaveText("result");
    const after = (await (await page.request.get(`/api/scorings/${scoringId}/validation`)).json()) as typeof before;
    expect(after.validation.inputsHash).not.toBe(before.validation.inputsHash);
    expect(after.validation.evidence.find((e) => e.key === `target:${t.id}`)?.used).toBe(true);
    expect(after.validation.evidence.filter((e) => e.used).length).toBe(before.validation.evidence.filter((e) => e.used).length + 1);
  });
});
