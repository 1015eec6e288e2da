import { test, expect, stateFor } from "./fixtures";

test("the demo lead signs in through the form and sees the demo project", async ({ page }) => {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill("lead@corrastan.example");
  await page.getByLabel("Password").fill("wrong password here");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toContainText("do not match");
  await page.getByLabel("Password").fill("lowstand-lead");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { name: "Projects" })).toBeVisible();
  await expect(page.getByRole("link", { name: /Corrastan Shelf/ })).toContainText("you are lead");
  await page.getByRole("button", { name: "Sign out" }).click();
  await expect(page).toHaveURL(/\/login$/);
});

test.describe("invitations", () => {
  test.use({ storageState: stateFor("lead") });

  test("the lead invites someone whose e-mailed link works once", async ({ page, browser, baseURL }) => {
    const invitee = `newcomer-${Date.now()}@corrastan.example`;
    await page.goto("/");
    await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
    await page.getByRole("link", { name: "Members" }).click();
    await page.getByLabel("E-mail").fill(invitee);
    await page.getByLabel("Role", { exact: true }).selectOption("analyst");
    await page.getByRole("button", { name: "Send the invitation" }).click();
    await expect(page.getByRole("status")).toContainText(`Invitation sent to ${invitee}`);
    await expect(page.getByText(`${invitee} · analyst`)).toBeVisible();

    // The message went over SMTP to the local catcher; read it on the outbox page.
    let link = "";
    await expect(async () => {
      await page.goto("/dev/outbox");
      const body = await page.locator("li", { hasText: invitee }).first().innerText();
      link = /https?:\/\/\S+\/invitations\/\S+/.exec(body)?.[0] ?? "";
      expect(link).not.toBe("");
    }).toPass({ timeout: 15_000 });
    expect(link.startsWith(`${baseURL}/invitations/`)).toBe(true);

    // A browser with nobody signed in (contexts made here would otherwise carry the lead's cookie).
    const signedOut = { storageState: { cookies: [], origins: [] } };
    const fresh = await browser.newContext(signedOut);
    const p2 = await fresh.newPage();
    await p2.goto(link);
    await expect(p2.getByRole("heading", { name: "Join Corrastan Shelf" })).toBeVisible();
    await p2.getByLabel("Your name").fill("Nia Fenwray");
    await p2.getByLabel("Choose a password").fill("a long enough password");
    await p2.getByRole("button", { name: "Create my account and join" }).click();
    await expect(p2.getByRole("heading", { name: "Corrastan Shelf", level: 1 })).toBeVisible();
    await expect(p2.getByRole("navigation", { name: "Project" })).toContainText("you are analyst");

    // A second use of the same link is refused.
    const p3 = await (await browser.newContext(signedOut)).newPage();
    await p3.goto(link);
    await expect(p3.getByText("not valid any more")).toBeVisible();
    await fresh.close();
  });
});
