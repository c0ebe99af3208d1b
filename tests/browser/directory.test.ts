// The public lab directory in a browser: filters go into the URL and results update without a page reload.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, openBrowser, screenshot, visit, type Browser } from "./harness";

let b: Browser;
beforeAll(async () => {
  b = await openBrowser();
});
afterAll(async () => {
  expect(b.consoleErrors).toEqual([]);
  await b?.close();
});

describe("lab directory", () => {
  it("filters by source and temperature in place, keeping the filters in the URL", async () => {
    await visit(b.page, "/labs");
    await b.page.getByRole("heading", { name: "Granite Ridge Characterisation" }).waitFor();
    expect(await b.page.getByRole("heading", { name: "Meridian Analytical" }).count()).toBe(0);
    await screenshot(b.page, "directory-all");
    // A marker on window survives only if the page is not reloaded.
    await b.page.evaluate(() => ((window as unknown as { marker: number }).marker = 42));
    await b.page.getByLabel("Source (anode)").selectOption("Mo");
    await b.page.waitForURL(`${BASE_URL}/labs?source=Mo`);
    await b.page.getByRole("status").filter({ hasText: "1 lab" }).waitFor();
    expect(await b.page.getByRole("heading", { level: 2 }).allTextContents()).toEqual(["Lakeside Institute X-ray Core"]);
    await b.page.getByLabel("Source (anode)").selectOption({ label: "Any source" });
    await b.page.waitForURL(`${BASE_URL}/labs`);
    await b.page.getByLabel("Temperature (K)").fill("1300");
    await b.page.waitForURL(`${BASE_URL}/labs?temperatureK=1300`);
    await b.page.getByRole("status").filter({ hasText: "1 lab" }).waitFor();
    expect(await b.page.getByRole("heading", { level: 2 }).allTextContents()).toEqual(["Granite Ridge Characterisation"]);
    expect(await b.page.evaluate(() => (window as unknown as { marker?: number }).marker)).toBe(42);
    await screenshot(b.page, "directory-filtered");
    await b.page.getByRole("link", { name: "Granite Ridge Characterisation" }).click();
    await b.page.getByRole("heading", { name: "Instruments" }).waitFor();
    await screenshot(b.page, "lab-profile");
  });

  it("opens straight on a filtered URL", async () => {
    await visit(b.page, "/labs?dMin=0.5");
    expect(await b.page.getByRole("heading", { level: 2 }).allTextContents()).toEqual(["Lakeside Institute X-ray Core"]);
  });
});
