// The capabilities editor and price list on the real PostgreSQL: validation with field errors, lab scoping, manager-only edits.
import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { getOrCreateLab } from "~/models/labs/vetting.server";
import { action as capabilitiesAction, loader as capabilitiesLoader } from "~/routes/lab/capabilities";
import { action as priceListAction } from "~/routes/lab/price-list";
import { action as signInAction } from "~/routes/public/sign-in";
import { INSTRUMENT_FIELDS } from "./form-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest, type RouteAnswer } from "./route-call";

const MANAGER = "lab@graniteridge.example";
const OPERATOR = "operator@graniteridge.example";
const OTHER_MANAGER = "lab@lakeside.example";
const NAME = "Bench reflection diffractometer (test)";

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: "diffractory-demo" })))!;
  return cookies[email];
}

/** Repeated form fields (checkbox groups) as a urlencoded body. */
function post(path: string, fields: [string, string][], cookie: string) {
  const request = formRequest(path, {}, cookie);
  return new Request(request, { body: new URLSearchParams(fields) });
}

const instrument = (overrides: Record<string, string> = {}, forms = ["powder", "pellet"]): [string, string][] => [
  ...Object.entries({ ...INSTRUMENT_FIELDS, name: NAME, ...overrides }),
  ...forms.map((f) => ["sampleForms", f] as [string, string]),
];

const errorsOf = (answer: RouteAnswer) => (answer.body as { result: { error: Record<string, string[]> } }).result.error;

async function labIdOf(email: string) {
  const [row] = await db
    .select({ id: schema.memberships.organisationId })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(eq(schema.users.email, email));
  return (await getOrCreateLab(row.id)).organisationId;
}

async function instrumentsNamed(name: string) {
  return db.select().from(schema.instruments).where(eq(schema.instruments.name, name));
}

let graniteRidge: string;
let lakeside: string;

beforeAll(async () => {
  await seedDemo();
  graniteRidge = await labIdOf(MANAGER);
  lakeside = await labIdOf(OTHER_MANAGER);
});

describe("instruments", () => {
  it("saves a valid instrument for the manager's lab", async () => {
    const answer = await callRoute(capabilitiesAction, post("/lab/capabilities", instrument({ energyDiscrimination: "on" }), await as(MANAGER)));
    expect(answer.status).toBe(302);
    const [saved] = await instrumentsNamed(NAME);
    expect(saved).toMatchObject({
      labId: graniteRidge,
      anode: "Cu",
      customWavelength: null,
      twoThetaMin: 5,
      twoThetaMax: 150,
      smallestStep: 0.01,
      energyDiscrimination: true,
      sampleForms: ["powder", "pellet"],
    });
  });

  it("refuses 2θ max 190° with a field error and saves nothing", async () => {
    const answer = await callRoute(capabilitiesAction, post("/lab/capabilities", instrument({ name: "Too wide", twoThetaMax: "190" }), await as(MANAGER)));
    expect(answer.status).toBe(400);
    expect(errorsOf(answer).twoThetaMax).toEqual(["2θ lies between 0° and 180°."]);
    expect(await instrumentsNamed("Too wide")).toHaveLength(0);
  });

  it("refuses a 2θ minimum at or above the maximum, a zero step and an unknown technique", async () => {
    const equal = await callRoute(
      capabilitiesAction,
      post("/lab/capabilities", instrument({ name: "Equal", twoThetaMin: "90", twoThetaMax: "90" }), await as(MANAGER)),
    );
    expect(equal.status).toBe(400);
    expect(errorsOf(equal).twoThetaMax).toEqual(["The largest 2θ must be above the smallest."]);
    const step = await callRoute(capabilitiesAction, post("/lab/capabilities", instrument({ name: "No step", smallestStep: "0" }), await as(MANAGER)));
    expect(errorsOf(step).smallestStep).toEqual(["The step must be more than 0°."]);
    const technique = await callRoute(
      capabilitiesAction,
      post("/lab/capabilities", instrument({ name: "Odd", technique: "electron_diffraction" }), await as(MANAGER)),
    );
    expect(technique.status).toBe(400);
    expect(errorsOf(technique).technique).toEqual(["Choose a technique from the list."]);
    for (const name of ["Equal", "No step", "Odd"]) expect(await instrumentsNamed(name)).toHaveLength(0);
  });

  it("needs a wavelength for a custom source and at least one sample form", async () => {
    const answer = await callRoute(
      capabilitiesAction,
      post("/lab/capabilities", instrument({ name: "Beamline", sourceKind: "custom", anode: "" }, []), await as(MANAGER)),
    );
    expect(answer.status).toBe(400);
    expect(errorsOf(answer).customWavelength).toEqual(["Enter the wavelength in Å."]);
    expect(errorsOf(answer).sampleForms).toEqual(["Tick at least one sample form."]);
  });

  it("answers 404 when a manager edits or removes another lab's instrument, and leaves it alone", async () => {
    const [theirs] = await db
      .insert(schema.instruments)
      .values({
        labId: lakeside,
        name: "Lakeside transmission (test)",
        technique: "powder_transmission",
        anode: "Mo",
        twoThetaMin: 2,
        twoThetaMax: 145,
        smallestStep: 0.01,
        detector: "strip_1d",
      })
      .returning();
    const edit = await callRoute(capabilitiesAction, post("/lab/capabilities", instrument({ id: theirs.id, name: "Taken over" }), await as(MANAGER)));
    expect(edit.status).toBe(404);
    const remove = await callRoute(
      capabilitiesAction,
      post(
        "/lab/capabilities",
        [
          ["intent", "remove-instrument"],
          ["id", theirs.id],
        ],
        await as(MANAGER),
      ),
    );
    expect(remove.status).toBe(404);
    const stage = await callRoute(
      capabilitiesAction,
      post(
        "/lab/capabilities",
        [
          ["intent", "save-stage"],
          ["instrumentId", theirs.id],
          ["name", "Sneaky stage"],
          ["minTemperatureK", "100"],
          ["maxTemperatureK", "300"],
          ["atmospheres", "air"],
        ],
        await as(MANAGER),
      ),
    );
    expect(stage.status).toBe(404);
    expect((await instrumentsNamed("Lakeside transmission (test)"))[0].labId).toBe(lakeside);
  });

  it("lets an operator read the capabilities but not change them (403)", async () => {
    const page = await callRoute(capabilitiesLoader, getRequest("/lab/capabilities", await as(OPERATOR)));
    expect(page.status).toBe(200);
    expect(page.body).toMatchObject({ canEdit: false });
    const answer = await callRoute(capabilitiesAction, post("/lab/capabilities", instrument({ name: "Operator's" }), await as(OPERATOR)));
    expect(answer.status).toBe(403);
    expect(await instrumentsNamed("Operator's")).toHaveLength(0);
  });
});

describe("sample stages", () => {
  it("adds a stage and refuses Tmin ≥ Tmax and temperatures at or below 0 K", async () => {
    const [mine] = await instrumentsNamed(NAME);
    const stage = (min: string, max: string, name: string): [string, string][] => [
      ["intent", "save-stage"],
      ["formId", `stage-new-${mine.id}`],
      ["instrumentId", mine.id],
      ["name", name],
      ["minTemperatureK", min],
      ["maxTemperatureK", max],
      ["atmospheres", "air"],
      ["atmospheres", "nitrogen"],
    ];
    expect((await callRoute(capabilitiesAction, post("/lab/capabilities", stage("298", "1473", "Hot stage (test)"), await as(MANAGER)))).status).toBe(302);
    const inverted = await callRoute(capabilitiesAction, post("/lab/capabilities", stage("500", "300", "Inverted"), await as(MANAGER)));
    expect(inverted.status).toBe(400);
    expect(errorsOf(inverted).maxTemperatureK).toEqual(["The highest temperature must be above the lowest."]);
    expect((inverted.body as { formId: string }).formId).toBe(`stage-new-${mine.id}`);
    const zero = await callRoute(capabilitiesAction, post("/lab/capabilities", stage("0", "300", "Absolute zero"), await as(MANAGER)));
    expect(errorsOf(zero).minTemperatureK).toEqual(["Temperatures in kelvin are above 0 K."]);
    const stages = await db.select().from(schema.sampleStages).where(eq(schema.sampleStages.instrumentId, mine.id));
    expect(stages.map((s) => [s.name, s.minTemperatureK, s.maxTemperatureK, s.atmospheres])).toEqual([["Hot stage (test)", 298, 1473, ["air", "nitrogen"]]]);
  });
});

describe("hazard acceptance", () => {
  it("saves GHS pictograms and special categories and refuses unknown codes", async () => {
    const fields: [string, string][] = [
      ["intent", "save-hazards"],
      ["pictograms", "GHS07"],
      ["pictograms", "GHS08"],
      ["specialCategories", "nanomaterial"],
    ];
    expect((await callRoute(capabilitiesAction, post("/lab/capabilities", fields, await as(MANAGER)))).status).toBe(302);
    const [row] = await db.select().from(schema.hazardAcceptance).where(eq(schema.hazardAcceptance.labId, graniteRidge));
    expect(row).toMatchObject({ pictograms: ["GHS07", "GHS08"], specialCategories: ["nanomaterial"] });
    const bad = await callRoute(
      capabilitiesAction,
      post(
        "/lab/capabilities",
        [
          ["intent", "save-hazards"],
          ["pictograms", "GHS10"],
        ],
        await as(MANAGER),
      ),
    );
    expect(bad.status).toBe(400);
  });
});

describe("price list", () => {
  const prices = (overrides: Record<string, string> = {}) =>
    Object.entries({
      currency: "NOK",
      "perSample.powder_reflection": "180.00",
      "perSample.thin_film": "1250.5",
      perExtraTemperaturePoint: "45.00",
      perInstrumentHour: "95.00",
      samplePreparation: "20.00",
      hazardousHandling: "60.00",
      rushMultiplier: "1.75",
      turnaroundDays: "8",
      ...overrides,
    }) as [string, string][];

  it("stores prices typed in major units as integer minor units", async () => {
    const answer = await callRoute(priceListAction, post("/lab/price-list", prices(), await as(MANAGER)));
    expect(answer.status).toBe(302);
    const [row] = await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, graniteRidge));
    // 180.00 → 18000 and 1250.5 → 125050 minor units (hand calculation: × 100).
    expect(row).toMatchObject({
      currency: "NOK",
      perSampleMinor: { powder_reflection: 18000, thin_film: 125050 },
      perExtraTemperaturePointMinor: 4500,
      perInstrumentHourMinor: 9500,
      samplePreparationMinor: 2000,
      hazardousHandlingMinor: 6000,
      rushMultiplier: "1.75",
      turnaroundDays: 8,
    });
  });

  it("refuses a negative price, a malformed amount, an unknown currency and no per-sample price, changing nothing", async () => {
    const negative = await callRoute(priceListAction, post("/lab/price-list", prices({ "perSample.powder_reflection": "-5.00" }), await as(MANAGER)));
    expect(negative.status).toBe(400);
    expect(errorsOf(negative)["perSample.powder_reflection"]).toEqual(["Prices cannot be negative."]);
    const malformed = await callRoute(
      priceListAction,
      post("/lab/price-list", prices({ perInstrumentHour: "12.345", turnaroundDays: "0" }), await as(MANAGER)),
    );
    expect(errorsOf(malformed).perInstrumentHour[0]).toMatch(/at most two decimals/);
    expect(errorsOf(malformed).turnaroundDays).toEqual(["At least 1 day."]);
    const currency = await callRoute(priceListAction, post("/lab/price-list", prices({ currency: "XXX" }), await as(MANAGER)));
    expect(errorsOf(currency).currency).toEqual(["Choose a currency from the list."]);
    const none = await callRoute(
      priceListAction,
      post("/lab/price-list", prices({ "perSample.powder_reflection": "", "perSample.thin_film": "" }), await as(MANAGER)),
    );
    expect(errorsOf(none).perSample).toEqual(["Give a per-sample price for at least one technique."]);
    const [row] = await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, graniteRidge));
    expect(row.perSampleMinor).toEqual({ powder_reflection: 18000, thin_film: 125050 });
  });

  it("does not let an operator change the price list (403)", async () => {
    expect((await callRoute(priceListAction, post("/lab/price-list", prices({ currency: "EUR" }), await as(OPERATOR)))).status).toBe(403);
  });
});

describe("sample holder and instrument profile", () => {
  const PROFILED = "Profiled diffractometer (test)";
  const profileFields = (overrides: Record<string, string> = {}) =>
    instrument({ name: PROFILED, sampleHolder: "silicon_zero_background", cagliotiU: "0.004", cagliotiV: "-0.003", cagliotiW: "0.002", ...overrides });

  it("saves the holder and U, V, W typed in by the manager, naming them as entered", async () => {
    const answer = await callRoute(capabilitiesAction, post("/lab/capabilities", profileFields(), await as(MANAGER)));
    expect(answer.status).toBe(302);
    const [saved] = await instrumentsNamed(PROFILED);
    // U 0.004, V −0.003, W 0.002 degrees²: the order of a laboratory instrument's profile (common practice).
    expect(saved).toMatchObject({
      sampleHolder: "silicon_zero_background",
      cagliotiU: 0.004,
      cagliotiV: -0.003,
      cagliotiW: 0.002,
      profileSource: "Entered by the lab",
    });
    const page = await callRoute(capabilitiesLoader, getRequest("/lab/capabilities", await as(MANAGER)));
    expect((page.body as { instruments: { name: string; cagliotiU: number | null }[] }).instruments.find((i) => i.name === PROFILED)?.cagliotiU).toBe(0.004);
  });

  it("refuses an incomplete profile, centidegree values, a width that is not real and an unknown holder, changing nothing", async () => {
    const [before] = await instrumentsNamed(PROFILED);
    const cookie = await as(MANAGER);
    const edit = (overrides: Record<string, string>) =>
      callRoute(capabilitiesAction, post("/lab/capabilities", profileFields({ id: before.id, ...overrides }), cookie));
    const partial = await edit({ cagliotiV: "", cagliotiW: "" });
    expect(partial.status).toBe(400);
    expect(errorsOf(partial).cagliotiV).toEqual(["Give all three of U, V and W, or leave all three empty."]);
    expect(errorsOf(partial).cagliotiW).toEqual(["Give all three of U, V and W, or leave all three empty."]);
    const units = await edit({ cagliotiU: "2", cagliotiV: "-2", cagliotiW: "5" });
    expect(errorsOf(units).cagliotiU[0]).toMatch(/check the units/);
    // 0.004 tan²θ − 0.02 tanθ + 0.003 is negative from 2θ ≈ 17.6° (hand calculation in tests/unit/instrument-form.test.ts).
    const imaginary = await edit({ cagliotiV: "-0.02", cagliotiW: "0.003" });
    expect(errorsOf(imaginary).cagliotiW[0]).toMatch(/^With these U, V and W the peak width would not be real at 1[78]\.\d° 2θ/);
    const text = await edit({ cagliotiU: "small" });
    expect(errorsOf(text).cagliotiU).toEqual(["Enter Caglioti U in degrees² as a number."]);
    const holder = await edit({ sampleHolder: "cardboard" });
    expect(errorsOf(holder).sampleHolder).toEqual(["Choose a sample holder from the list."]);
    const [after] = await instrumentsNamed(PROFILED);
    expect(after).toEqual(before);
  });

  it("clears the profile when all three are left empty, and keeps 'not stated' as no holder", async () => {
    const [row] = await instrumentsNamed(PROFILED);
    const answer = await callRoute(
      capabilitiesAction,
      post("/lab/capabilities", profileFields({ id: row.id, sampleHolder: "none", cagliotiU: "", cagliotiV: "", cagliotiW: "" }), await as(MANAGER)),
    );
    expect(answer.status).toBe(302);
    const [cleared] = await instrumentsNamed(PROFILED);
    expect(cleared).toMatchObject({ sampleHolder: null, cagliotiU: null, cagliotiV: null, cagliotiW: null, profileSource: null });
  });

  it("saves the U, V, W fitted to the vetting calibration scan on a chosen instrument, from the stored fit only", async () => {
    const [row] = await instrumentsNamed(PROFILED);
    const save = async (instrumentId: string, email = MANAGER) =>
      callRoute(
        capabilitiesAction,
        post(
          "/lab/capabilities",
          [
            ["intent", "save-calibration-profile"],
            ["formId", "calibration-profile"],
            ["instrumentId", instrumentId],
            // Numbers in the form are ignored: only the stored fit is saved.
            ["U", "0.9"],
          ],
          await as(email),
        ),
      );
    await db.update(schema.labs).set({ calibrationCheck: null }).where(eq(schema.labs.organisationId, graniteRidge));
    const none = await save(row.id);
    expect(none.status).toBe(400);
    expect(errorsOf(none)[""]).toEqual(["The calibration scan gave no instrument profile to save; hand in a calibration scan first."]);

    const check = {
      standard: "si_srm640c",
      scanFileName: "si-640c.xrdml",
      checkedAt: "2026-11-30T09:15:00.000Z",
      instrumentProfile: { U: 0.0051, V: -0.0022, W: 0.0019, peaks: 11 },
    };
    await db.update(schema.labs).set({ calibrationCheck: check }).where(eq(schema.labs.organisationId, graniteRidge));
    expect((await save(row.id)).status).toBe(302);
    const [saved] = await instrumentsNamed(PROFILED);
    expect(saved).toMatchObject({ cagliotiU: 0.0051, cagliotiV: -0.0022, cagliotiW: 0.0019 });
    expect(saved.profileSource).toMatch(/^Fitted to the calibration scan si-640c\.xrdml \(.+\), 2026-11-30$/);

    // Saving the instrument form again with the same numbers keeps where they came from.
    expect(
      (
        await callRoute(
          capabilitiesAction,
          post("/lab/capabilities", profileFields({ id: row.id, cagliotiU: "0.0051", cagliotiV: "-0.0022", cagliotiW: "0.0019" }), await as(MANAGER)),
        )
      ).status,
    ).toBe(302);
    expect((await instrumentsNamed(PROFILED))[0].profileSource).toBe(saved.profileSource);

    // Another lab's instrument is not there for this lab; an operator may not save; a missing choice is one sentence.
    const [theirs] = await db.select().from(schema.instruments).where(eq(schema.instruments.labId, lakeside));
    expect((await save(theirs.id)).status).toBe(404);
    expect((await save(row.id, OPERATOR)).status).toBe(403);
    const missing = await save("");
    expect(errorsOf(missing).instrumentId).toEqual(["Choose the instrument to save the profile on."]);
  });
});
