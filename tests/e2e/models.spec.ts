import { test, expect, stateFor, demoReconstructionPublished } from "./fixtures";

// Trained models on the demo (scripts/demo/demo-files.ts, scripts/seed.ts): four in-situ sites, one
// of them (VEL-002) in the hold-out, and one core with archaeological material; a trawled find, a
// derived find and three cores without material are left out. So 4 presences remain: the forest is
// refused at the default minimum of 10, and still at the floor of 5, with the numbers shown.

test.describe("models as the lead", () => {
  test.use({ storageState: stateFor("lead") });
  test.setTimeout(240_000);

  test("starting a model on the demo shows why the forest is refused, with the count and what was left out", async ({ page }) => {
    await demoReconstructionPublished(page);
    const rail = page.getByRole("navigation", { name: "Project" });
    await rail.getByRole("link", { name: "Models", exact: true }).click();
    await expect(page.getByRole("heading", { name: "Models", level: 1 })).toBeVisible();
    await page.getByLabel("Reconstruction").selectOption({ label: "Demo: last deglaciation" });
    await page.getByRole("button", { name: "Train" }).click();

    const refusal = page.getByRole("alert").filter({ hasText: "No model: too few sites" });
    await expect(refusal).toBeVisible();
    await expect(refusal.getByTestId("presences-remaining")).toHaveText("4");
    await expect(refusal).toContainText("3 in-situ sites, 1 core with archaeological material");
    await expect(refusal).toContainText("at least 10");
    await expect(refusal.getByRole("row", { name: /derived find/ })).toContainText("1");
    await expect(refusal.getByRole("row", { name: /trawled find/ })).toContainText("1");
    await expect(refusal.getByRole("row", { name: /core without archaeological material/ })).toContainText("3");
    await expect(refusal.getByRole("row", { name: /held-out site/ })).toContainText("1");
    // nothing was queued
    await expect(page.getByText("No models yet.")).toBeVisible();

    // At the floor of 5 presences it is still refused: a lead cannot talk the forest into 4 sites.
    await page.getByLabel("Reconstruction").selectOption({ label: "Demo: last deglaciation" });
    await page.getByLabel("Minimum presences").fill("5");
    await page.getByRole("button", { name: "Train" }).click();
    await expect(refusal.getByTestId("presences-remaining")).toHaveText("4");
    await expect(refusal).toContainText("at least 5");
    await expect(page.getByText("No models yet.")).toBeVisible();
    // and below the floor the request is refused as bad input
    await page.getByLabel("Reconstruction").selectOption({ label: "Demo: last deglaciation" });
    await page.getByLabel("Minimum presences").fill("3");
    await page.getByRole("button", { name: "Train" }).click();
    await expect(page.getByText("minSites must be at least 5.")).toBeVisible();
  });
});

test.describe("models as a viewer", () => {
  test.use({ storageState: stateFor("viewer") });

  test("a viewer has no Models link and is refused the page", async ({ page }) => {
    await page.goto("/");
    await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
    const rail = page.getByRole("navigation", { name: "Project" });
    await expect(rail.getByRole("link", { name: "Weights", exact: true })).toBeVisible();
    await expect(rail.getByRole("link", { name: "Models", exact: true })).toHaveCount(0);
    const res = await page.goto(`${page.url().replace(/(\/projects\/\d+).*/, "$1")}/models`);
    expect(res?.status()).toBe(403);
  });
});
