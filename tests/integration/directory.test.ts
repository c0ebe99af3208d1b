// The public lab directory API on the real PostgreSQL with the demo scenario's labs.
import { beforeAll, describe, expect, it } from "vitest";
import { seedDemo } from "~/demo/seed.server";
import { loader as labsApi } from "~/routes/api/labs";
import { loader as labProfile } from "~/routes/public/lab-profile";
import { callRoute, getRequest } from "./route-call";

interface DirectoryAnswer {
  labs: {
    slug: string;
    name: string;
    minD: number;
    sources: string[];
    temperatureRangeK: [number, number] | null;
    priceFrom: number;
    currency: string;
    turnaroundDays: number;
  }[];
  total: number;
  page: number;
}

async function directory(query: string) {
  return callRoute(labsApi, getRequest(`/api/labs${query}`));
}
const names = (a: { body: unknown }) => (a.body as DirectoryAnswer).labs.map((l) => l.name);

beforeAll(async () => {
  await seedDemo();
});

describe("GET /api/labs", () => {
  it("lists the approved labs to anonymous callers, never the one awaiting vetting", async () => {
    const a = await directory("");
    expect(a.status).toBe(200);
    expect(names(a)).toEqual(["Granite Ridge Characterisation", "Lakeside Institute X-ray Core"]);
    expect((a.body as DirectoryAnswer).total).toBe(2);
    expect(names(a)).not.toContain("Meridian Analytical");
  });

  it("filters by source: Mo gives only Lakeside", async () => {
    expect(names(await directory("?source=Mo"))).toEqual(["Lakeside Institute X-ray Core"]);
  });

  it("filters by a temperature point: 1300 K only Granite Ridge (hot stage to 1473 K)", async () => {
    expect(names(await directory("?temperatureK=1300"))).toEqual(["Granite Ridge Characterisation"]);
  });

  it("filters by the smallest d needed: 0.5 Å only Lakeside's Mo instrument reaches", async () => {
    expect(names(await directory("?dMin=0.5"))).toEqual(["Lakeside Institute X-ray Core"]);
  });

  it("reports minD = λ / (2 sin θmax) by Bragg's law (hand calculation with the Kα1 values of docs/reference-values.md#x-ray-wavelengths)", async () => {
    const labs = (await directory("")).body as DirectoryAnswer;
    const granite = labs.labs.find((l) => l.name.startsWith("Granite"))!;
    const lakeside = labs.labs.find((l) => l.name.startsWith("Lakeside"))!;
    // Cu Kα1 1.540593 Å, 2θmax 150° → 1.540593 / (2 sin 75°) = 0.79747 Å
    expect(granite.minD).toBeCloseTo(1.540593 / (2 * Math.sin((75 * Math.PI) / 180)), 3);
    expect(granite.minD).toBeCloseTo(0.7975, 4);
    // Mo Kα1 0.709317 Å, 2θmax 145° → 0.709317 / (2 sin 72.5°) = 0.37190 Å
    expect(lakeside.minD).toBeCloseTo(0.3719, 4);
    expect(granite.temperatureRangeK).toEqual([298, 1473]);
    expect(granite.sources).toEqual(["Co", "Cu"]);
    expect(granite.priceFrom).toBe(18000);
    expect(granite.currency).toBe("EUR");
  });

  it("combines filters: hazards, price, technique, free text", async () => {
    expect(names(await directory("?hazard=GHS06"))).toEqual(["Granite Ridge Characterisation"]);
    expect(names(await directory("?hazard=nanomaterial&hazard=GHS08"))).toEqual(["Granite Ridge Characterisation", "Lakeside Institute X-ray Core"]);
    expect(names(await directory("?hazard=radioactive"))).toEqual([]);
    expect(names(await directory("?maxPrice=200"))).toEqual(["Granite Ridge Characterisation"]);
    expect(names(await directory("?technique=powder_transmission"))).toEqual(["Lakeside Institute X-ray Core"]);
    expect(names(await directory("?q=cryostat"))).toEqual(["Lakeside Institute X-ray Core"]);
    expect(names(await directory("?q=50%25_"))).toEqual([]);
    expect(names(await directory("?source=Cu&temperatureK=90"))).toEqual([]);
  });

  it("answers 400 naming the field for invalid parameters", async () => {
    for (const [query, field] of [
      ["?source=Xx", "source"],
      ["?dMin=abc", "dMin"],
      ["?dMin=-1", "dMin"],
      ["?temperatureK=1e9", "temperatureK"],
      ["?hazard=GHS10", "hazard"],
      ["?page=0", "page"],
      ["?page=1.5", "page"],
      ["?technique=xray", "technique"],
      ["?colour=red", "colour"],
    ] as const) {
      const a = await directory(query);
      expect(a.status, query).toBe(400);
      expect((a.body as { field: string }).field, query).toBe(field);
    }
  });

  it("pages past the end with an empty list and the true total", async () => {
    const a = (await directory("?page=3")).body as DirectoryAnswer;
    expect(a).toMatchObject({ labs: [], total: 2, page: 3 });
  });
});

describe("lab profile", () => {
  it("shows an approved lab and 404s for one awaiting vetting", async () => {
    expect((await callRoute(labProfile, getRequest("/labs/granite-ridge-characterisation"), { slug: "granite-ridge-characterisation" })).status).toBe(200);
    expect((await callRoute(labProfile, getRequest("/labs/meridian-analytical"), { slug: "meridian-analytical" })).status).toBe(404);
    expect((await callRoute(labProfile, getRequest("/labs/nope"), { slug: "nope" })).status).toBe(404);
  });
});
