import { test, expect, stateFor, demoReconstructionPublished, scoreAdoptedVersion } from "./fixtures";
import { demoUsers } from "../../scripts/demo/demo-data";

// A review on the demo (the invented Corrastan Shelf): the analyst scores the adopted weight set at
// full resolution, the reviewer opens a review on that scoring, is refused with a wrong password,
// signs "accepted with conditions" with their own, and opens the printable report, whose every
// section renders under print media.

const reviewerPassword = demoUsers.find((u) => u.role === "reviewer")!.password;

test.describe("a regulator's review", () => {
  test.setTimeout(300_000);

  test("the reviewer opens a review on a published scoring, signs it with conditions, and prints its report", async ({ browser, baseURL }) => {
    // The analyst scores the project's adopted weight-set version at 20 ka.
    const analyst = await browser.newContext({ storageState: stateFor("analyst") });
    const a = await analyst.newPage();
    const reconstructionId = Number(await demoReconstructionPublished(a));
    const projectId = /\/projects\/(\d+)/.exec(a.url())![1];
    const scoringId = await scoreAdoptedVersion(a.request, baseURL!, projectId, reconstructionId, { kind: "age", ageKa: 20 });
    await analyst.close();

    const reviewer = await browser.newContext({ storageState: stateFor("reviewer") });
    const page = await reviewer.newPage();
    await page.goto(`/projects/${projectId}`);
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Reviews", exact: true }).click();
    await expect(page.getByRole("heading", { name: "Reviews", level: 1 })).toBeVisible();
    await page.getByLabel("Title").fill("Corrastan array, pre-consent");
    await page.getByLabel("What is reviewed").selectOption(`scoring:${scoringId}`);
    await page.getByRole("button", { name: "Open the review" }).click();

    const review = page.getByTestId("review");
    await expect(review).toHaveAttribute("data-status", "open");
    const hash = (await page.getByTestId("snapshot-hash").textContent())!.trim();
    expect(hash).toMatch(/^[0-9a-f]{64}$/);
    await expect(page.getByTestId("snapshot-table")).toContainText(`#${scoringId} · 20 ka`);

    // A comment starts the thread.
    await page.getByRole("textbox", { name: "Comment" }).fill("The palaeochannel south of the array is unassessed: what survey covers it?");
    await page.getByRole("button", { name: "Add the comment" }).click();
    await expect(page.getByTestId("comment-thread")).toContainText("palaeochannel south of the array");

    // A wrong password signs nothing.
    await page.getByLabel("Condition 1").fill("A watching brief during cable trenching across the palaeochannel");
    await page.getByLabel("Your password, to sign").fill("not-the-password");
    await page.getByRole("button", { name: "Sign the decision" }).click();
    await expect(page.getByText(/nothing was stored/)).toBeVisible();
    await expect(review).toHaveAttribute("data-status", "open");

    // Signed with two conditions and the reviewer's own password.
    await page.getByLabel("Condition 1").fill("A watching brief during cable trenching across the palaeochannel");
    await page.getByRole("button", { name: "Add a condition" }).click();
    await page.getByLabel("Condition 2").fill("A finds-reporting protocol for the whole construction period");
    await page.getByLabel("Your password, to sign").fill(reviewerPassword);
    await page.getByRole("button", { name: "Sign the decision" }).click();
    await expect(review).toHaveAttribute("data-status", "decided");
    const signed = page.getByTestId("signed-decision");
    await expect(signed).toContainText("Decision: accepted with conditions");
    await expect(signed).toContainText("Signed by Runa Haskeld");
    await expect(page.getByRole("button", { name: "Sign the decision" })).toHaveCount(0);

    // The printable report, under print media: every section heading, the map, the signature.
    await page.getByRole("link", { name: "Printable report" }).click();
    await page.emulateMedia({ media: "print" });
    const report = page.getByTestId("review-report");
    await expect(report).toBeVisible();
    for (const heading of [
      "1. Scope",
      "2. Data and coverage",
      "3. Methods and citations",
      "4. Maps",
      "5. Conflict table",
      "6. Lease-block figures",
      "7. Uncertainty",
      "8. Mitigation and exclusion zones",
      "9. Decision and signature",
      "10. Cautions",
    ])
      await expect(report.getByRole("heading", { name: heading, level: 2 })).toBeVisible();
    await expect(page.getByRole("navigation", { name: "Report" })).toBeHidden(); // the toolbar does not print
    await expect(report).toContainText(hash);
    await expect(page.getByTestId("report-signature")).toContainText("A finds-reporting protocol for the whole construction period");
    await expect(report).toContainText("a low score is not evidence of absence");
    const map = page.getByTestId("map-potential");
    await expect.poll(() => map.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth), { timeout: 30_000 }).toBeGreaterThan(0);
    await expect(page.getByTestId("class-areas")).toBeVisible();
    // The desk's figures on the frozen scoring: the demo's turbines and export cable, its lease blocks, the zones.
    await expect(page.getByTestId("report-conflicts")).toContainText("EC-1");
    await expect(page.getByTestId("report-blocks").locator("tbody tr").first()).toBeVisible();
    await expect(page.getByTestId("report-mitigation")).toBeVisible();
    await expect(report.getByTestId("not-available")).toHaveCount(0);
    // The history lists the signed review.
    await page.goto(`/projects/${projectId}/reviews`);
    await expect(page.getByTestId("review-history").locator("tr[data-status=decided]")).toContainText("Corrastan array, pre-consent");
    await reviewer.close();
  });
});
