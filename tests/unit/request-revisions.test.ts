// The words a lab reads when a request changes after its quote, and the stop naming the need no lab meets.
// Values are inputs chosen for the test (invented samples); the instrument is the Cu/Co pair of match-fixtures.
import { describe, expect, it } from "vitest";
import { whyNoLabFits, type MatchLab } from "~/domain/matching";
import { describeChanges, type RequestSnapshot, type SampleSnapshot } from "~/domain/request-revisions";
import { cuAndCo, IRON_RICH } from "./match-fixtures";

const sample = (label: string): SampleSnapshot => ({
  label,
  formula: "LiFePO4",
  form: "powder",
  massMg: 300,
  expectedPhase: "olivine",
  cell: [0, 10.33, 6.01, 4.69, 90, 90, 90],
  phases: 0,
  hazards: [],
  afterMeasurement: "return",
  handlingNotes: null,
  sdsFileName: null,
});

const BEFORE: RequestSnapshot = {
  title: "LFP lot",
  technique: "powder_reflection",
  rangeKind: "two_theta",
  rangeMin: 10,
  rangeMax: 80,
  preferredSource: "any",
  temperaturePointsK: [],
  atmosphere: "air",
  quality: "standard",
  deadline: "2026-12-12",
  budgetMinor: 50_000,
  currency: "EUR",
  visibility: "open",
  samples: [sample("HC-2611-A")],
};

describe("describeChanges", () => {
  it("names the deadline, the range and an added sample in words", () => {
    const after = { ...BEFORE, deadline: "2026-12-19", rangeMin: 5, rangeMax: 90, samples: [sample("HC-2611-A"), sample("HC-2611-B")] };
    expect(describeChanges(BEFORE, after)).toBe("Deadline 12 Dec 2026 → 19 Dec 2026; range 10–80° 2θ → 5–90° 2θ; sample HC-2611-B added");
  });

  it("names temperatures, the budget in money, a changed and a removed sample", () => {
    const changed = { ...sample("HC-2611-A"), hazards: ["GHS07"] };
    const after = { ...BEFORE, temperaturePointsK: [298, 573], budgetMinor: 65_000, samples: [changed] };
    expect(describeChanges(BEFORE, after)).toBe("Temperatures room temperature → 298, 573 K; budget €500.00 → €650.00; sample HC-2611-A: hazard declaration");
    expect(describeChanges({ ...BEFORE, samples: [sample("A"), sample("B")] }, { ...BEFORE, samples: [sample("A")] })).toBe("Sample B removed");
  });

  it("is null when nothing changed", () => {
    expect(describeChanges(BEFORE, structuredClone(BEFORE))).toBeNull();
  });
});

describe("whyNoLabFits", () => {
  const { cu, co } = cuAndCo({ cu: "Cu reflection", co: "Co reflection" });
  const lab = (name: string, instruments = [cu, co]): MatchLab => ({
    id: name,
    name,
    slug: name,
    instruments,
    acceptance: { pictograms: [], specialCategories: [] },
    priceList: null,
  });

  it("names the temperature above every stage, with the highest offered", () => {
    const req = { ...IRON_RICH, temperaturePointsK: [1600] };
    expect(whyNoLabFits(req, [lab("A"), lab("B")])).toBe("every lab is ruled out by the temperature 1600 K in air (highest offered 1473 K)");
  });

  it("names an atmosphere no stage offers and a form no instrument takes", () => {
    const req = { ...IRON_RICH, atmosphere: "vacuum", temperaturePointsK: [573], samples: [{ ...IRON_RICH.samples[0], form: "thin_film" }] };
    expect(whyNoLabFits(req, [lab("A")])).toBe(
      "every lab is ruled out by the atmosphere vacuum (offered: air, nitrogen) and by the sample form thin film (offered: powder)",
    );
  });

  it("names refused hazards, and each lab's own reason when no single need rules all out", () => {
    const hazardous = { ...IRON_RICH, samples: [{ ...IRON_RICH.samples[0], ghsPictograms: ["GHS06"] }] };
    expect(whyNoLabFits(hazardous, [lab("A")])).toBe("every lab is ruled out by the declared hazards GHS06");
    const hot = { ...IRON_RICH, temperaturePointsK: [573] };
    const mixed = [lab("Hot-only", [{ ...cu, sampleForms: ["pellet"] }]), lab("Cold-only", [co])];
    expect(whyNoLabFits(hot, mixed)).toMatch(
      /^each lab is ruled out by a different need \(Hot-only: does not take powder samples; Cold-only: no stage reaches 573 K/,
    );
  });

  it("says so when there is no lab at all", () => {
    expect(whyNoLabFits(IRON_RICH, [])).toBe("there is no approved lab on Diffractory yet");
  });
});
