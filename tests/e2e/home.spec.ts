import { test, expect, stateFor } from "./fixtures";

test("the front page welcomes a signed-out visitor in our own type and colours", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { name: /drowned land/ })).toBeVisible();
  await expect(page.getByRole("link", { name: "Sign in" }).first()).toBeVisible();
  await expect(page.getByRole("complementary", { name: "Cautions" })).toContainText("not evidence of absence");
  // No project is listed to someone signed out.
  await expect(page.getByText("Corrastan Shelf")).toHaveCount(0);

  // The bundled Work Sans is what the page actually renders with (no font from the internet).
  const fontLoaded = await page.evaluate(async () => {
    await document.fonts.ready;
    return [...document.fonts].some((f) => f.family.includes("Work Sans") && f.status === "loaded");
  });
  expect(fontLoaded).toBe(true);
  expect(await page.locator("body").evaluate((el) => getComputedStyle(el).fontFamily)).toContain("Work Sans");
  // The page background is our sand, not the browser's white.
  const bg = await page.locator("html").evaluate((el) => getComputedStyle(el).backgroundColor);
  expect(bg).not.toBe("rgb(255, 255, 255)");
  expect(bg).not.toBe("rgba(0, 0, 0, 0)");
});

test("health answers 200 with the database up", async ({ request }) => {
  const res = await request.get("/healthz");
  expect(res.status()).toBe(200);
  expect(await res.json()).toMatchObject({ database: "up" });
});

test.describe("with a saved sign-in", () => {
  test.use({ storageState: stateFor("viewer") });
  test("a viewer sees the demo project and no member controls", async ({ page }) => {
    await page.goto("/");
    await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
    await expect(page.getByRole("heading", { name: "Corrastan Shelf", level: 1 })).toBeVisible();
    await page.getByRole("link", { name: "Members" }).click();
    await expect(page.getByRole("cell", { name: "Ilsa Marrowby" })).toBeVisible();
    await expect(page.getByRole("button", { name: "Send the invitation" })).toHaveCount(0);
    await expect(page.getByRole("link", { name: "Audit log" })).toHaveCount(0);
  });
});
