import { test, expect } from "./fixtures";

test("the front page lists the demo project in our own type and colours", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { name: "Projects" })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Corrastan Shelf" })).toBeVisible();
  await expect(page.getByText("demo · invented")).toBeVisible();
  await expect(page.getByRole("complementary", { name: "Cautions" })).toContainText("not evidence of absence");

  // The bundled Work Sans is what the page actually renders with (no font from the internet).
  const fontLoaded = await page.evaluate(async () => {
    await document.fonts.ready;
    return document.fonts.check('16px "Work Sans"') && [...document.fonts].some((f) => f.family.includes("Work Sans") && f.status === "loaded");
  });
  expect(fontLoaded).toBe(true);
  const family = await page.locator("body").evaluate((el) => getComputedStyle(el).fontFamily);
  expect(family).toContain("Work Sans");
  // The page background is our sand-50, not the browser's white.
  const bg = await page.locator("html").evaluate((el) => getComputedStyle(el).backgroundColor);
  expect(bg).not.toBe("rgb(255, 255, 255)");
  expect(bg).not.toBe("rgba(0, 0, 0, 0)");
});

test("health answers 200 with the database up", async ({ request }) => {
  const res = await request.get("/healthz");
  expect(res.status()).toBe(200);
  expect(await res.json()).toMatchObject({ database: "up" });
});
