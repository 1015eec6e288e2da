import type { APIRequestContext, Page } from "@playwright/test";
import { test, expect, stateFor } from "./fixtures";

// The review desk of the demo (design §11: two lease blocks, VM-12 and VM-13, and the phase-1 wind
// farm: turbines T1–T5 and the export cable EC-1; a known wreck). The desk reads a full-resolution
// scoring of the adopted version: if the demo has none yet, the analyst starts one through the API.

async function openProject(page: Page): Promise<number> {
  await page.goto("/");
  await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
  await expect(page).toHaveURL(/\/projects\/\d+/);
  return Number(/\/projects\/(\d+)/.exec(page.url())![1]);
}

/** Makes sure a published scoring of the adopted version exists, as the analyst would. */
async function ensureAdoptedScoring(api: APIRequestContext, projectId: number) {
  type Rec = { id: number; name: string; status: string; manifest: { agesKa: number[] } | null };
  const demoRec = async () => ((await (await api.get(`/api/projects/${projectId}/reconstructions`)).json()) as { reconstructions: Rec[] }).reconstructions.find((r) => r.name === "Demo: last deglaciation" && r.status === "published");
  await expect.poll(async () => !!(await demoRec()), { timeout: 150_000, intervals: [1000] }).toBe(true);
  const rec = (await demoRec())!;
  const adopted = ((await (await api.get(`/api/projects/${projectId}/weight-sets/adopted`)).json()) as { adopted: { versionId: number } | null }).adopted;
  expect(adopted, "the demo adopts a weight-set version").not.toBeNull();
  const list = async () => ((await (await api.get(`/api/projects/${projectId}/scorings`)).json()) as { scorings: Array<{ id: number; status: string; version: { id: number } }> }).scorings;
  const mine = (await list()).filter((s) => s.version.id === adopted!.versionId);
  if (mine.some((s) => s.status === "published")) return;
  const ages = rec.manifest!.agesKa;
  const ageKa = ages.includes(12) ? 12 : ages[0];
  const res = await api.post(`/api/projects/${projectId}/scorings`, { data: { reconstructionId: rec.id, weightSetVersionId: adopted!.versionId, target: { kind: "age", ageKa } } });
  expect([200, 202]).toContain(res.status());
  await expect.poll(async () => (await list()).some((s) => s.version.id === adopted!.versionId && s.status === "published"), { timeout: 150_000, intervals: [1000] }).toBe(true);
}

test.describe("the review desk as a reviewer", () => {
  test.use({ storageState: stateFor("reviewer") });
  test.setTimeout(360_000);

  test("reads the conflict table and the block figures of the demo, sorts and exports them, and sets a buffer", async ({ page, browser, baseURL }) => {
    const projectId = await openProject(page);
    const analyst = await browser.newContext({ storageState: stateFor("analyst"), baseURL });
    await ensureAdoptedScoring(analyst.request, projectId);
    await analyst.close();

    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Review desk" }).click();
    await expect(page.getByRole("heading", { name: "Review desk", level: 1 })).toBeVisible();
    await expect(page.getByTestId("desk-scoring")).toContainText(/Scoring \d+/);

    // the small map, drawn on the server
    const img = page.getByTestId("desk-map").locator("img");
    const mapRes = await page.request.get((await img.getAttribute("src"))!);
    expect(mapRes.status(), await mapRes.text().catch(() => "")).toBe(200);
    expect(mapRes.headers()["content-type"]).toBe("image/png");
    await expect.poll(() => img.evaluate((el) => (el as HTMLImageElement).complete && (el as HTMLImageElement).naturalWidth), { timeout: 30_000 }).toBe(512);

    // the conflict table: the five turbines and the export cable, each with a reach and a mitigation
    const conflicts = page.getByTestId("conflict-table");
    await expect(conflicts.locator("tbody tr")).toHaveCount(6);
    for (const id of ["T1", "T2", "T3", "T4", "T5", "EC-1"]) await expect(conflicts.locator(`tr[data-asset="${id}"]`)).toBeVisible();
    for (const reach of await conflicts.locator("tbody tr").evaluateAll((rows) => rows.map((r) => r.getAttribute("data-reach")))) expect(["reaches", "may_reach", "stays_above", "unassessed"]).toContain(reach);
    await expect(conflicts.locator("tbody tr").first().locator("td").last()).toHaveText(/Targeted survey|Coring|Watching brief|Finds-reporting protocol/);

    // sorted by impact depth, ascending: the cable (2.5 m) comes before the monopiles (32 m)
    await conflicts.getByRole("button", { name: /Impact depth/ }).click();
    await expect(conflicts.locator("tbody tr").first()).toHaveAttribute("data-asset", "EC-1");
    await conflicts.getByRole("button", { name: /Impact depth/ }).click();
    await expect(conflicts.locator("tbody tr").last()).toHaveAttribute("data-asset", "EC-1");

    const csvHref = await page.getByRole("link", { name: "Download CSV" }).first().getAttribute("href");
    const csv = await page.request.get(csvHref!);
    expect(csv.status()).toBe(200);
    expect(csv.headers()["content-type"]).toContain("text/csv");
    expect(await csv.text()).toMatch(/^asset_id,kind,dataset,/);

    // the block figures: both demo blocks, shares, the reviewer's exact site counts
    const blocks = page.getByTestId("block-table");
    await expect(blocks.locator("tbody tr")).toHaveCount(2);
    await expect(blocks.locator('tr[data-block="Block VM-12"]')).toContainText("30.00"); // 5 km × 6 km
    await expect(blocks.locator('tr[data-block="Block VM-13"] [data-testid="block-sites"]')).toHaveText(/^\d+$/);

    // zones: the demo wreck with the default 100 m buffer, then a wider one set here
    const zones = page.getByTestId("zone-summary");
    await expect(zones).toContainText("Unnamed steel wreck");
    await expect(zones).toContainText("0 + 100 = 100");
    const form = page.getByTestId("buffer-form");
    await form.getByLabel("Wreck (m)").fill("150");
    await form.getByRole("button", { name: "Save buffers" }).click();
    await expect(page.getByRole("status")).toHaveText("Buffers saved.");
    await expect(zones).toContainText("0 + 150 = 150");
    // beyond 5000 m the form itself refuses (the server refuses it too: app/regulator.int.test.ts)
    await form.getByLabel("Wreck (m)").fill("6000");
    await form.getByRole("button", { name: "Save buffers" }).click();
    expect(await form.getByLabel("Wreck (m)").evaluate((el) => (el as HTMLInputElement).validity.rangeOverflow)).toBe(true);
    await expect(zones).toContainText("0 + 150 = 150");
    // put the demo back as it was
    await form.getByLabel("Wreck (m)").fill("100");
    await form.getByRole("button", { name: "Save buffers" }).click();
    await expect(page.getByRole("status")).toHaveText("Buffers saved.");
  });
});

test.describe("the review desk as a viewer", () => {
  test.use({ storageState: stateFor("viewer") });
  test.setTimeout(240_000);

  test("shows suppressed or generalised site counts and no buffer controls", async ({ page, browser, baseURL }) => {
    const projectId = await openProject(page);
    const analyst = await browser.newContext({ storageState: stateFor("analyst"), baseURL });
    await ensureAdoptedScoring(analyst.request, projectId);
    await analyst.close();
    await page.goto(`/projects/${projectId}/regulator`);
    const blocks = page.getByTestId("block-table");
    await expect(blocks.locator("tbody tr")).toHaveCount(2, { timeout: 60_000 });
    for (const cell of await blocks.getByTestId("block-sites").allTextContents()) expect(cell).toMatch(/^(< \d+|\d+)$/);
    await expect(page.getByText(/counted by their generalised/)).toBeVisible();
    await expect(page.getByRole("button", { name: "Save buffers" })).toHaveCount(0);
    await expect(page.getByTestId("buffer-form").getByLabel("Wreck (m)")).toBeDisabled();
  });
});
