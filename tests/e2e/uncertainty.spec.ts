import { test, expect, stateFor, demoReconstructionPublished } from "./fixtures";

// A reviewer tests how sure the demo's adopted potential is (issue 12): a seeded Monte Carlo over the
// weights and the landscape at one age chosen on the sea-level strip, then the tornado of
// one-at-a-time sensitivity and the robust/contested shares per lease block.
test.describe("uncertainty as a reviewer", () => {
  test.use({ storageState: stateFor("reviewer") });
  test.setTimeout(240_000);

  test("runs the analysis on the adopted weight set at one age and reads the tornado and the block shares", async ({ page }) => {
    await demoReconstructionPublished(page);
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Uncertainty", exact: true }).click();
    const form = page.getByRole("form", { name: "Start an uncertainty run" });
    await expect(form).toBeVisible();
    // the age comes from the strip: step once to the next age
    const before = await page.getByTestId("chosen-age").textContent();
    await page.getByRole("button", { name: "Younger age" }).click();
    await expect(page.getByTestId("chosen-age")).not.toHaveText(before!);
    await form.getByLabel("Draws", { exact: true }).fill("200");
    await form.getByLabel("Seed", { exact: true }).fill("20261202");
    await form.getByLabel("Landscape draws").fill("5");
    await form.getByRole("button", { name: "Run the uncertainty analysis" }).click();
    await expect(page.locator('[data-testid^="run-status-"]').first()).toHaveText("published", { timeout: 180_000 });
    const result = page.getByTestId("uncertainty-result");
    await expect(result).toBeVisible({ timeout: 30_000 });
    await expect(page.getByTestId("tornado-table")).toBeVisible();
    await expect(page.getByTestId("tornado-table").locator("tr")).not.toHaveCount(0);
    const blocks = page.getByTestId("block-shares");
    await expect(blocks).toBeVisible();
    // the demo's two invented lease blocks
    await expect(blocks).toContainText("VM-12");
    await expect(blocks).toContainText("VM-13");
  });
});
