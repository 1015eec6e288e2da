import { test, expect, stateFor, demoReconstructionPublished, scoreAdoptedVersion } from "./fixtures";

// Validation on the demo (the invented Corrastan Shelf): the adopted weight set scored for the
// "Early Holocene coast" period (8–12 ka, where the demo's in-situ sites are dated:
// scripts/demo/demo-sites.ts), then held against the sites on the Validation page — the number of
// sites, AUC with its interval and the gain per class. The demo holds VEL-002 out (scripts/seed.ts):
// the page says one site is held out, never where. (tests/e2e/models.spec.ts sets a trained model
// beside the adopted weight set on the same page.)

test.describe("validation as the lead", () => {
  test.use({ storageState: stateFor("lead") });
  test.setTimeout(300_000);

  test("the lead opens Validation and sees gain, AUC with its interval and the number of sites", async ({ page, baseURL }) => {
    const reconstructionId = Number(await demoReconstructionPublished(page));
    const projectId = /\/projects\/(\d+)/.exec(page.url())![1];
    const scoringId = await scoreAdoptedVersion(page.request, baseURL!, projectId, reconstructionId, { kind: "period", name: "Early Holocene coast" });

    await page.goto(`/projects/${projectId}`);
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Validation", exact: true }).click();
    await expect(page.getByRole("heading", { name: "Validation", level: 1 })).toBeVisible();
    await page.getByLabel("Validate", { exact: true }).selectOption(`scoring:${scoringId}`);

    const summary = page.getByTestId("validation-summary").first();
    await expect(summary).toHaveAttribute("data-status", "ok", { timeout: 60_000 });
    // the number of sites is always shown: the demo's in-situ sites of 8–12 ka less the held-out one
    await expect(page.getByTestId("site-count").first()).toContainText(/^\d+ \(\d+ sites?, \d+ cores?/);
    await expect(page.getByTestId("auc").first()).toContainText(/\d\.\d{3} \(95 % interval \d\.\d{3}–\d\.\d{3}\), \d+ sites against [\d,]+ background cells/);
    await expect(page.getByTestId("top-gain").first()).toContainText(/holds [\d.]+ % of the area/);
    await expect(page.getByTestId("holdout-note").first()).toContainText("1 site is held out");
    const table = page.getByTestId("gain-table").first();
    await expect(table).toContainText("Cumulative gain");
    expect(await table.locator("tbody tr").count()).toBeGreaterThanOrEqual(4); // the project's four classes (and unassessed ground, where there is any)
    await expect(page.getByTestId("gain-chart").locator("svg").first()).toBeVisible();
    await expect(page.getByTestId("capture-chart").locator("svg").first()).toBeVisible();
    // moved finds are listed with their reason, never scored; the held-out site is not listed
    const evidence = page.getByTestId("evidence-table");
    await expect(evidence).toContainText("derived find");
    await expect(evidence).toContainText("trawled find");
    await expect(evidence).not.toContainText("VEL-002");

    // the API agrees with the page
    const api = (await (await page.request.get(`/api/scorings/${scoringId}/validation`)).json()) as { validation: { counts: { presences: number }; holdout: { heldOut: number } } };
    expect(api.validation.holdout.heldOut).toBe(1);
    await expect(page.getByTestId("site-count").first()).toContainText(`${api.validation.counts.presences} (`);
  });
});
