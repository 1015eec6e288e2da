import type { Locator, Page } from "@playwright/test";
import { test, expect, stateFor, demoReconstructionPublished } from "./fixtures";

// The weighing page of the demo (scripts/demo/demo-weight-sets.ts): "Estuary foragers" (v2 adopted)
// and its fork "Valley hunters".

/** Opens a demo weight set beside the map and waits until its potential has been drawn. */
async function openWeightSet(page: Page, name: string): Promise<{ map: Locator; status: Locator }> {
  // the seeded reconstruction must be published before anything can be scored
  const reconstructionId = await demoReconstructionPublished(page);
  const rail = page.getByRole("navigation", { name: "Project" });
  await rail.getByRole("link", { name: "Weights", exact: true }).click();
  await page.getByRole("link", { name, exact: true }).first().click();
  await expect(page.getByTestId("weighing-page")).toBeVisible();
  // other tests may publish more reconstructions: score the demo's own
  await page.goto(`${page.url().split("?")[0]}?reconstruction=${reconstructionId}`);
  const map = page.getByTestId("map");
  const status = page.getByTestId("live-status");
  await expect(status).not.toHaveAttribute("data-checksum", "", { timeout: 60_000 });
  await expect.poll(async () => (await map.getAttribute("data-overlay-tag")) === (await status.getAttribute("data-checksum")), { timeout: 30_000 }).toBe(true);
  return { map, status };
}

const renderCount = (map: Locator) => map.getAttribute("data-render-count").then(Number);

/** After a change: the worker's new potential is drawn (the tag is written after a frame) in a later frame than `after`, counted before the change. */
async function waitForRedraw(map: Locator, status: Locator, before: string, after: number) {
  await expect(status).not.toHaveAttribute("data-checksum", before, { timeout: 30_000 });
  const now = (await status.getAttribute("data-checksum"))!;
  await expect(map).toHaveAttribute("data-overlay-tag", now, { timeout: 30_000 });
  await expect.poll(() => renderCount(map), { timeout: 30_000 }).toBeGreaterThan(after);
  return now;
}

test.describe("weighing as an analyst", () => {
  test.use({ storageState: stateFor("analyst") });
  test.setTimeout(240_000);

  test("moving a weight or a curve handle re-scores the map at once, and a save becomes a new version", async ({ page }) => {
    const { map, status } = await openWeightSet(page, "Valley hunters");
    const canvas = map.locator("canvas").first();
    const first = await status.getAttribute("data-checksum");
    const shotBefore = await canvas.screenshot();

    // a weight: the slider moves with the keyboard
    const slope = page.getByRole("slider", { name: "Weight of Slope" });
    const framesBefore = await renderCount(map);
    await slope.focus();
    await page.keyboard.press("ArrowRight");
    await page.keyboard.press("ArrowRight");
    const afterWeight = await waitForRedraw(map, status, first!, framesBefore);
    expect(afterWeight).not.toBe(first);
    expect(await canvas.screenshot()).not.toEqual(shotBefore);
    await expect(page.getByTestId("unsaved")).toBeVisible();

    // a curve: open the stream factor and type a new control point
    await page.getByRole("button", { name: /Distance to a stream/ }).click();
    const point = page.getByRole("spinbutton", { name: "Distance to a stream: half at" });
    const count = await renderCount(map);
    await point.fill("2500");
    await point.press("Enter");
    await waitForRedraw(map, status, afterWeight, count);

    // points out of order are refused with the curve's message, and nothing changes
    const held = await status.getAttribute("data-checksum");
    await point.fill("-50");
    await point.press("Enter");
    await expect(page.getByRole("alert").filter({ hasText: "The curve was not changed" })).toBeVisible();
    await expect(status).toHaveAttribute("data-checksum", held!);

    // save: a new version with its reason at the top of the history
    const versions = page.getByTestId("versions-panel");
    const historyBefore = await versions.getByTestId("version-history").locator("li").count();
    await versions.getByLabel("Why (kept with the version)").fill("Steeper ground counts against; streams reach farther");
    await versions.getByRole("button", { name: /^Save as v\d+$/ }).click();
    await expect(versions.getByTestId("version-history").locator("li")).toHaveCount(historyBefore + 1, { timeout: 15_000 });
    await expect(versions.getByTestId("version-history").locator("li").first()).toContainText("Steeper ground counts against");
    await expect(page.getByTestId("unsaved")).toHaveCount(0);
  });

  test("compares two weight sets on the map with Spearman's ρ and the top cells in common", async ({ page }) => {
    const { map, status } = await openWeightSet(page, "Estuary foragers");
    const before = (await status.getAttribute("data-checksum"))!;
    const count = await renderCount(map);
    await page.getByText("Compare", { exact: true }).click();
    await page.getByLabel("Compare with").selectOption({ label: "Valley hunters v1" });
    const figures = page.getByTestId("compare-figures");
    await expect(figures).toContainText("Spearman", { timeout: 30_000 });
    await expect(figures).toContainText(/Top [\d,]+ cells in common\s*\d+(\.\d)? %/);
    await expect.poll(async () => (await map.getAttribute("data-overlay-tag"))?.startsWith("diff:"), { timeout: 30_000 }).toBe(true);
    await expect.poll(() => renderCount(map), { timeout: 30_000 }).toBeGreaterThan(count);
    expect(before).toBeTruthy();
  });

  test("the full-resolution scoring equals what the browser drew, and its GeoTIFF downloads", async ({ page }) => {
    const { map, status } = await openWeightSet(page, "Estuary foragers");
    // an age no other test scores (16 ka, one step along the strip), so the job runs now on the data
    // the browser has now, rather than an identical request from another test being reused
    const first = (await status.getAttribute("data-checksum"))!;
    const frames = await renderCount(map);
    await page.getByRole("button", { name: "Younger age" }).click();
    await expect(map).toHaveAttribute("data-age", "16");
    const browserChecksum = await waitForRedraw(map, status, first, frames);
    await page.getByText("Full resolution", { exact: true }).click();
    await page.getByRole("button", { name: /^Score v\d+ at 16 ka$/ }).click();
    const run = page.getByTestId("scoring-runs").locator("li").first();
    await expect(run).toContainText("16 ka");
    await expect(run).toHaveAttribute("data-status", "published", { timeout: 120_000 });
    const id = await run.getAttribute("data-scoring-id");
    const body = (await (await page.request.get(`/api/scorings/${id}`)).json()) as { scoring: { result: { displayChecksum: { checksum: string } } } };
    // the job scored the same 8-bit display copies with the same code: the same bytes
    expect(body.scoring.result.displayChecksum.checksum).toBe(browserChecksum);
    const link = run.getByRole("link", { name: "potential GeoTIFF" });
    const tif = await page.request.get((await link.getAttribute("href"))!);
    expect(tif.status()).toBe(200);
    expect(tif.headers()["content-type"]).toContain("image/tiff");
    const bytes = await tif.body();
    expect(bytes.subarray(0, 2).toString("latin1")).toBe("II"); // little-endian TIFF
  });
});

test.describe("weighing as a viewer", () => {
  test.use({ storageState: stateFor("viewer") });
  test.setTimeout(180_000);

  test("sees the potential but no edit controls, and the API refuses an edit", async ({ page, baseURL }) => {
    await openWeightSet(page, "Estuary foragers");
    await expect(page.getByRole("slider", { name: "Weight of Slope" })).toBeDisabled();
    await expect(page.getByRole("button", { name: /^Save as v/ })).toHaveCount(0);
    await expect(page.getByRole("button", { name: "Adopt" })).toHaveCount(0);
    await expect(page.getByRole("button", { name: /^Score v/ })).toHaveCount(0);
    const id = /\/weights\/(\d+)/.exec(page.url())![1];
    const res = await page.request.patch(`/api/weight-sets/${id}`, { headers: { "Content-Type": "application/json", Origin: baseURL! }, data: { version: 2, note: "viewer edit" } });
    expect(res.status()).toBe(403);
  });
});

test.describe("adopting as a lead", () => {
  test.use({ storageState: stateFor("lead") });
  test.setTimeout(180_000);

  test("adopts a version with a rationale, and the project's weights page says so", async ({ page }) => {
    await openWeightSet(page, "Valley hunters");
    const versions = page.getByTestId("versions-panel");
    await versions.getByLabel("Rationale (recorded in the audit log)").fill("Inland valleys fit the new core results better");
    await versions.getByRole("button", { name: "Adopt" }).click();
    await expect(versions.getByRole("status")).toContainText("adopted weight set", { timeout: 15_000 });
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Weights", exact: true }).click();
    await expect(page.getByTestId("adopted")).toContainText("Valley hunters");
    await expect(page.getByTestId("adopted")).toContainText("Inland valleys fit the new core results better");
  });
});
