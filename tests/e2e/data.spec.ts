import { test, expect, stateFor } from "./fixtures";
import { writeGeoTiff } from "../../app/terrain/geotiff-write";
import { makeElevationGrid } from "../../app/terrain/grid";

/** A small invented depth grid over open ocean in UTM 33S, made by our own writer. */
function depthTiff(): Buffer {
  const w = 8, h = 6;
  const grid = makeElevationGrid(
    { width: w, height: h, originX: 480_000, originY: 5_030_000, cellSizeX: 100, cellSizeY: 100, crs: { epsg: 32733, proj4: "" } },
    Float32Array.from({ length: w * h }, (_, i) => 30 + (i % w) * 2 + Math.floor(i / w)),
  );
  return Buffer.from(writeGeoTiff(grid.grid));
}

test.describe("evidence", () => {
  test.use({ storageState: stateFor("analyst") });

  test("an analyst uploads a bathymetry grid, sees it listed with its provenance, and a bad file is refused", async ({ page }) => {
    await page.goto("/");
    await page.getByRole("link", { name: /Corrastan Shelf/ }).click();
    await page.getByRole("navigation", { name: "Project" }).getByRole("link", { name: "Data" }).click();

    // A JPEG renamed .tif is refused with a message, and nothing is listed.
    await page.getByLabel("What the file holds").selectOption("bathymetry");
    await page.getByLabel("File", { exact: true }).setInputFiles({ name: "survey.tif", mimeType: "image/tiff", buffer: Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1]) });
    await page.getByLabel("Values are").selectOption("depth_positive_down");
    await page.getByLabel("Datum").fill("LAT");
    await page.getByLabel("Offset to present MSL (m)").fill("-2.1");
    await page.getByRole("button", { name: "Upload", exact: true }).click();
    await expect(page.getByRole("alert")).toContainText(/JPEG|not a file Lowstand can read/);
    await expect(page.getByRole("link", { name: "survey", exact: true })).toHaveCount(0);

    await page.getByLabel("Name (optional)").fill("Velmar multibeam 2026");
    await page.getByLabel("File", { exact: true }).setInputFiles({ name: "velmar.tif", mimeType: "image/tiff", buffer: depthTiff() });
    await page.getByLabel("Values are").selectOption("depth_positive_down");
    await page.getByLabel("Datum").fill("LAT");
    await page.getByLabel("Offset to present MSL (m)").fill("-2.1");
    await page.getByRole("button", { name: "Upload", exact: true }).click();
    await expect(page.getByRole("status")).toContainText("is stored: 48 cells");
    await page.getByRole("link", { name: "Velmar multibeam 2026" }).first().click();
    await expect(page.getByRole("heading", { name: "Velmar multibeam 2026" })).toBeVisible();
    await expect(page.getByText("datum LAT, offset to present MSL -2.1 m")).toBeVisible();
    await expect(page.getByText(/“velmar\.tif”/)).toBeVisible();
    await expect(page.getByText(/SHA-256 [0-9a-f]{64}/)).toBeVisible();
  });
});
