import { test, expect, stateFor, withWorkerHeld } from "./fixtures";

test.describe("reconstructions", () => {
  test.use({ storageState: stateFor("analyst") });
  test.setTimeout(180_000);

  test("an analyst opens the demo's layers, starts a reconstruction, watches it, cancels another, and gets the e-mail", async ({ page }) => {
    await page.goto("/");
    await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Reconstructions" }).click();

    // The demo's reconstruction, queued by the seed, finishes on the worker; its page follows it.
    await page.getByRole("link", { name: "Demo: last deglaciation" }).click();
    await expect(page.getByTestId("reconstruction")).toHaveAttribute("data-status", "published", { timeout: 120_000 });
    await expect(page.getByRole("heading", { name: "Layers for every age" })).toBeVisible();
    const preview = page.getByRole("img", { name: "flooding_age preview", exact: true });
    await preview.scrollIntoViewIfNeeded();
    await expect.poll(() => preview.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBeGreaterThan(0);
    await page.getByRole("button", { name: "12 ka" }).click();
    await expect(page.getByText(/Sea level -\d+\.\d m · land/)).toBeVisible();
    await expect(page.getByText(/global, far-field approximation/).first()).toBeVisible();

    // Two more from the form. The second is started while the worker is held (as if busy with
    // another job), so it waits in the queue, where a cancel ends it at once.
    const startOne = async (ages: string, name: string) => {
      await page.goto(page.url().replace(/\/reconstructions.*$/, "/reconstructions"));
      await page.getByLabel("Name (optional)").fill(name);
      await page.getByLabel("Ages (ka BP)").fill(ages);
      await page.getByRole("button", { name: "Reconstruct" }).click();
      await expect(page.getByRole("heading", { name })).toBeVisible();
    };
    await startOne("19, 15", "Two ages");
    const first = page.url();
    await withWorkerHeld(async () => {
      await startOne("17, 13, 9", "Three ages");
      await expect(page.getByRole("progressbar", { name: "Progress" })).toBeVisible();
      await expect(page.getByText("Waiting for a worker…")).toBeVisible();
      await page.getByRole("button", { name: "Cancel the reconstruction" }).click();
      await expect(page.getByTestId("reconstruction")).toHaveAttribute("data-status", "cancelled");
      await expect(page.getByText(/^Cancelled\. Start it again/)).toBeVisible();
    });

    await page.goto(first);
    await expect(page.getByTestId("reconstruction")).toHaveAttribute("data-status", "published", { timeout: 120_000 });
    await expect(page.getByRole("link", { name: "GeoTIFF" }).first()).toBeVisible();
    // Any published reconstruction opens on the map, not only the newest.
    await expect(page.getByRole("link", { name: "Open on the map" })).toHaveAttribute("href", /\/map\?reconstruction=\d+$/);

    // The job-ended e-mail reached the local catcher, with a link to the run.
    await expect(async () => {
      await page.goto("/dev/outbox");
      await expect(page.locator("li", { hasText: "analyst@corrastan.example" }).filter({ hasText: "has finished" }).first()).toBeVisible({ timeout: 1000 });
    }).toPass({ timeout: 30_000 });
  });
});
