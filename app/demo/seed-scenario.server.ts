// The rest of the invented demo scenario (docs/design.md#demo-scenario), made through the app's own model functions so every
// row, ledger posting, timeline event, audit entry, outbox letter and in-app notification is the real one:
// requests in every state, quotes sent, declined, withdrawn and lapsed side by side, orders in the physical
// states (in transit, received, measuring, delivered with checked scans), a refusal on arrival, an open
// dispute, Pinecrest's nanomaterial and toxic samples with their safety data sheets, and Meridian's
// vetting application with a checked calibration scan. Three delivered orders show the declarations beside
// the main phase: a batch with a declared impurity, a sample declared with two candidate forms, and a lot
// measured against a tight acceptance window that it misses. Each request is made once (found by its title).
import { createHash } from "node:crypto";
import { and, eq } from "drizzle-orm";
import type { z } from "zod";
import { db, schema } from "~/db/client.server";
import type { Cell, Centering, CrystalSystem, Radiation } from "~/diffraction";
import type { AcceptanceWindow } from "~/diffraction/phases";
import { formatScanAsXy, simulatePattern, type SimulatedScan } from "~/diffraction/simulate";
import { LANTHANUM_HEXABORIDE, LITHIUM_IRON_PHOSPHATE, RUTILE } from "~/diffraction/structures";
import { checkCalibrationScan } from "~/domain/calibration-check";
import { markDelivered, markReceived, markShipped, startMeasuring } from "~/models/orders/lifecycle.server";
import { submitApplication, vettingPrefix } from "~/models/labs/vetting.server";
import { openDispute, refuseOnArrival } from "~/models/orders/lifecycle.server";
import {
  acceptQuote,
  draftLineItems,
  instrumentsOf,
  lapseExpiredQuotes,
  priceListOf,
  sendQuote,
  withdrawQuote,
  type SendQuoteResult,
} from "~/models/requests/quotes.server";
import { MeasurementStepSchema, SampleHazardSchema, SamplesStepSchema, type SampleSchema } from "~/domain/request-forms";
import {
  acknowledgeHazards,
  createDraft,
  ownRequestOf,
  publishRequest,
  samplesOf,
  saveHazards,
  saveMeasurement,
  saveVisibility,
  sdsPrefix,
} from "~/models/requests/requests.server";
import { LICENCE_STATEMENT } from "~/domain/vetting";
import { expireOverdueRequests, withdrawRequest } from "~/models/requests/request-life.server";
import { putObject, storageKeyFor } from "~/models/files/storage.server";
import { simplePdf } from "./demo-pdf";
import { payOrder } from "./seed-orders.server";
import { CO, CU, LFP_DECLARATION, LFP_LOT, LFP_SCAN, storeCheckedScan } from "./seed-scans.server";

const DAY = 86_400_000;
const isoDate = (offsetDays: number) => new Date(Date.now() + offsetDays * DAY).toISOString().slice(0, 10);

const GRANITE = "Granite Ridge Characterisation";
const LAKESIDE = "Lakeside Institute X-ray Core";
const HALVORSEN = "Halvorsen Cathode Works";
const PINECREST = "Pinecrest Solid Forms";
/** Who acts for each lab: the manager quotes and receives, the operator measures and uploads. */
const LAB_PEOPLE: Record<string, { manager: string; operator: string }> = {
  [GRANITE]: { manager: "lab@graniteridge.example", operator: "operator@graniteridge.example" },
  [LAKESIDE]: { manager: "lab@lakeside.example", operator: "lab@lakeside.example" },
};

type Hazards = {
  ghs?: string[];
  hStatements?: string;
  special?: Record<string, { declared: true; details: string }>;
  handlingNotes?: string;
  afterMeasurement?: "return" | "lab_disposes";
};

interface SampleSpec {
  /** The samples step's fields, with any further expected phases, candidate forms and acceptance window. */
  fields: Omit<z.input<typeof SampleSchema>, "id">;
  hazards?: Hazards;
  /** A scan the lab delivers for this sample, simulated by the engine and checked. */
  scan?: { fileName: string; simulate: () => SimulatedScan };
}

interface QuoteSpec {
  lab: string;
  instrument: string;
  turnaroundDays: number;
  notes: string;
  /** Sent with a validity that has already passed, so it lapses. */
  lapsed?: boolean;
  /** The lab withdraws it again. */
  withdrawn?: boolean;
}

type End =
  | "draft"
  | "open"
  | "expired"
  | "withdrawn"
  | "samples_in_transit"
  | "samples_received"
  | "measuring"
  | "data_delivered"
  | "refused_on_arrival"
  | "disputed";

export interface ScenarioRequest {
  title: string;
  client: string;
  /** The member who posts it and acts for the client. */
  by: string;
  technique: "powder_reflection" | "powder_transmission";
  samples: SampleSpec[];
  range: [number, number];
  currency: string;
  budget?: string;
  quotes: QuoteSpec[];
  /** The lab whose quote the client accepts (the others are declined). */
  accept?: string;
  end: End;
  /** The lab's reason for a refusal on arrival, the client's for a dispute. */
  reason?: string;
  /** Carrier and tracking number of the shipment. */
  shipping?: [string, string];
}

// ─── Samples (invented labels; cells rounded from common literature values, from memory) ───

const lfp = (label: string, phase = "LiFePO4, olivine (triphylite)"): SampleSpec["fields"] => ({
  label,
  ...LFP_DECLARATION,
  massMg: 400,
  expectedPhase: phase,
});

/** Layered NMC on hexagonal axes (R -3 m): a ≈ 2.87 Å, c ≈ 14.2 Å (common literature values, from memory). */
const NMC_DECLARED = { a: 2.868, c: 14.23 };
const nmc = (label: string, formula: string, phase: string): SampleSpec["fields"] => ({
  label,
  formula,
  form: "powder",
  massMg: 600,
  expectedPhase: phase,
  crystalSystem: "trigonal",
  centering: "R",
  cellA: NMC_DECLARED.a,
  cellB: NMC_DECLARED.a,
  cellC: NMC_DECLARED.c,
  cellAlpha: 90,
  cellBeta: 90,
  cellGamma: 120,
});

const organic = (
  label: string,
  formula: string,
  phase: string,
  system: CrystalSystem,
  centering: Centering,
  cell: [number, number, number, number, number, number],
  form: "powder" | "capillary" = "powder",
): SampleSpec["fields"] => ({
  label,
  formula,
  form,
  massMg: 150,
  expectedPhase: phase,
  crystalSystem: system,
  centering,
  cellA: cell[0],
  cellB: cell[1],
  cellC: cell[2],
  cellAlpha: cell[3],
  cellBeta: cell[4],
  cellGamma: cell[5],
});

/** The lot of the delivered LFP order: the olivine as declared, and a coated trial with rutile mixed in. */
const lfpScan =
  (seed: number, rutileScale = 0) =>
  () => {
    const main = simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: LFP_LOT, noise: { seed } });
    if (!rutileScale) return main;
    const impurity = simulatePattern({ ...LFP_SCAN, structure: RUTILE, background: { constant: 0 }, scale: rutileScale, noise: { seed: seed + 1 } });
    return { ...main, intensity: main.intensity.map((v, i) => v + impurity.intensity[i]) };
  };

/**
 * The disputed NMC lot: the layered oxide close to its declaration, with the lines of lithium carbonate
 * (monoclinic C2/c, a 8.36, b 4.97, c 6.19 Å, β 114.7°, rounded from memory), a common surface residue.
 */
const nmcDisputedScan = () => {
  const scan = { twoThetaMin: 15, twoThetaMax: 120, step: 0.02, radiation: CO as Radiation, zeroShift: 0.02 };
  const main = simulatePattern({
    ...scan,
    cell: { a: 2.869, b: 2.869, c: 14.225, alpha: 90, beta: 90, gamma: 120 },
    system: "trigonal",
    centering: "R",
    background: { constant: 140, slope: -0.5 },
    scale: 7000,
    noise: { seed: 2655 },
  });
  const carbonate = simulatePattern({
    ...scan,
    cell: { a: 8.36, b: 4.97, c: 6.19, alpha: 90, beta: 114.7, gamma: 90 },
    system: "monoclinic",
    centering: "C",
    background: { constant: 0 },
    scale: 1200,
    noise: { seed: 2656 },
  });
  return { ...main, intensity: main.intensity.map((v, i) => v + carbonate.intensity[i]) };
};

// ─── Declarations beside the main phase (invented batches; cells rounded from memory where named) ───

const orthorhombic = (a: number, b: number, c: number): Cell => ({ a, b, c, alpha: 90, beta: 90, gamma: 90 });

const cellList = (c: Cell): [number, number, number, number, number, number] => [c.a, c.b, c.c, c.alpha, c.beta, c.gamma];

/** A further phase's row of the samples step. */
const phaseRow = (name: string, system: CrystalSystem, centering: Centering, cell: Cell) => ({
  name,
  crystalSystem: system,
  centering,
  cellA: cell.a,
  cellB: cell.b,
  cellC: cell.c,
  cellAlpha: cell.alpha,
  cellBeta: cell.beta,
  cellGamma: cell.gamma,
});

/** β-Li3PO4 (orthorhombic, Pmn2₁), a 6.115, b 5.239, c 4.855 Å (from memory): a residue of excess lithium in olivine synthesis. */
export const LI3PO4_DECLARED: Cell = orthorhombic(6.12, 5.24, 4.86);
/** Halvorsen's acceptance window for olivine production lots: ± 0.002 Å on a, b and c around the declared cell. */
export const LFP_LOT_WINDOW: AcceptanceWindow = {
  a: { plusMinus: 0.002, unit: "absolute" },
  b: { plusMinus: 0.002, unit: "absolute" },
  c: { plusMinus: 0.002, unit: "absolute" },
};
/** The two forms Pinecrest declares for PSF-163 (invented cells of about the same volume, 902 and 913 Å³). */
export const PSF163_FORM_I: Cell = { a: 9.47, b: 11.82, c: 8.15, alpha: 90, beta: 98.6, gamma: 90 };
export const PSF163_FORM_II: Cell = orthorhombic(7.34, 12.66, 9.82);

/** The cells the demo scans of these orders are simulated from (invented, a little off each declaration). */
export const DEMO_TRUTHS = {
  /** HC-2681-A: the olivine and its Li3PO4 residue. */
  hc2681Olivine: orthorhombic(10.328, 6.007, 4.693),
  hc2681Li3po4: orthorhombic(6.118, 5.236, 4.857),
  /** HC-2693-1: a 0.005 Å above the declared 10.330 Å, outside the ± 0.002 Å window; b and c as declared. */
  hc2693Lot: orthorhombic(10.335, 6.01, 4.69),
  /** PSF-163-B: the batch crystallised as Form II. */
  psf163Batch: orthorhombic(7.352, 12.641, 9.834),
} as const;

/**
 * HC-2681: the olivine with some β-Li3PO4 residue, both visible. Without atoms every Li3PO4 reflection gets the
 * same |F|²; its scale puts its strongest line at about 12 % of the olivine's strongest.
 */
const lfpWithResidueScan = () => {
  const main = simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: DEMO_TRUTHS.hc2681Olivine, noise: { seed: 2681 } });
  const residue = simulatePattern({
    ...LFP_SCAN,
    cell: DEMO_TRUTHS.hc2681Li3po4,
    system: "orthorhombic",
    centering: "P",
    background: { constant: 0 },
    scale: LFP_SCAN.scale * 0.125,
    noise: { seed: 2682 },
  });
  return { ...main, intensity: main.intensity.map((v, i) => v + residue.intensity[i]) };
};

/** HC-2693: a clean olivine lot whose a is 0.005 Å off its declaration. */
const lfpOffWindowScan = () => simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: DEMO_TRUTHS.hc2693Lot, noise: { seed: 2693 } });

/** PSF-163: the Form II cell (no atoms: equal |F|² with the usual fall-off), as a small organic's scan on copper. */
const psf163Scan = () =>
  simulatePattern({
    twoThetaMin: 5,
    twoThetaMax: 60,
    step: 0.02,
    radiation: CU,
    cell: DEMO_TRUTHS.psf163Batch,
    system: "orthorhombic",
    centering: "P",
    background: { constant: 150, slope: -1 },
    scale: 6000,
    noise: { seed: 163 },
  });

const SDS_NOTE =
  "Invented demo document. A hazard declaration informs the lab; it does not replace this sheet, the carrier's rules or the lab's safety officers.";

export const SCENARIO: ScenarioRequest[] = [
  {
    title: "Hot-stage series of sodium layered oxide HC-2670",
    client: HALVORSEN,
    by: "member@halvorsen.example",
    technique: "powder_reflection",
    samples: [{ fields: nmc("HC-2670-A", "NaNi0.33Mn0.33Fe0.33O2", "O3-type sodium layered oxide") }],
    range: [10, 100],
    currency: "EUR",
    quotes: [],
    end: "draft",
  },
  {
    title: "Phase purity of NMC811 lot HC-2634",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      { fields: nmc("HC-2634-A", "LiNi0.8Mn0.1Co0.1O2", "NMC811 layered oxide (R-3m)") },
      { fields: nmc("HC-2634-B", "LiNi0.8Mn0.1Co0.1O2", "NMC811 layered oxide (R-3m)") },
    ],
    range: [10, 120],
    currency: "EUR",
    budget: "900",
    quotes: [
      {
        lab: GRANITE,
        instrument: "Reflection diffractometer B (Co)",
        turnaroundDays: 8,
        notes: "Measured on the cobalt tube to keep the manganese and cobalt fluorescence low.",
      },
      {
        lab: LAKESIDE,
        instrument: "Transmission diffractometer (Mo)",
        turnaroundDays: 12,
        notes: "Transmission in capillaries with an energy-discriminating detector; Mo radiation avoids fluorescence.",
      },
    ],
    end: "open",
  },
  {
    title: "Humidity series of hydrate PSF-097",
    client: PINECREST,
    by: "owner@pinecrest.example",
    technique: "powder_transmission",
    samples: [{ fields: organic("PSF-097", "C12H16N2O3", "PSF-097 dihydrate", "monoclinic", "P", [11.42, 7.18, 15.06, 90, 98.4, 90], "capillary") }],
    range: [5, 40],
    currency: "USD",
    quotes: [
      {
        lab: LAKESIDE,
        instrument: "Transmission diffractometer (Mo)",
        turnaroundDays: 12,
        notes: "Valid for two weeks; the cryostat is booked out after that.",
        lapsed: true,
      },
    ],
    end: "expired",
  },
  {
    title: "Screening of coated LMO trial HC-2588",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [{ fields: organic("HC-2588-A", "LiMn2O4", "LiMn2O4 spinel", "cubic", "F", [8.24, 8.24, 8.24, 90, 90, 90]) }],
    range: [10, 90],
    currency: "EUR",
    quotes: [
      {
        lab: GRANITE,
        instrument: "Reflection diffractometer B (Co)",
        turnaroundDays: 8,
        notes: "Withdrawn: the cobalt tube is out for service this month.",
        withdrawn: true,
      },
    ],
    end: "withdrawn",
  },
  {
    title: "Polymorph screen of nano-milled API PSF-152",
    client: PINECREST,
    by: "owner@pinecrest.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: organic("PSF-152-N", "C17H19N3O3S", "PSF-152 form A (nano-milled)", "monoclinic", "P", [9.84, 12.31, 14.07, 90, 101.6, 90]),
        hazards: {
          ghs: ["GHS08"],
          hStatements: "H373",
          special: {
            nanomaterial: {
              declared: true,
              details: "Wet-milled to a median particle size of about 180 nm; dusty when dry. Open only in a ventilated enclosure.",
            },
          },
          handlingNotes: "Double-bagged vial. Wear a P3 mask when the vial is opened outside an enclosure.",
          afterMeasurement: "lab_disposes",
        },
      },
      {
        fields: organic("PSF-152-T", "C21H22N2O2", "PSF-152 intermediate, form I", "orthorhombic", "P", [7.62, 13.45, 17.88, 90, 90, 90]),
        hazards: {
          ghs: ["GHS06"],
          hStatements: "H301, H331",
          handlingNotes: "Toxic if swallowed or inhaled. Sealed vial inside a screw-top tube; weigh only in a fume hood.",
          afterMeasurement: "return",
        },
      },
    ],
    range: [5, 40],
    currency: "EUR",
    budget: "700",
    quotes: [
      {
        lab: GRANITE,
        instrument: "Reflection diffractometer A (Cu)",
        turnaroundDays: 8,
        notes: "Both samples handled in our ventilated enclosure; the toxic sample goes back in its sealed tube.",
      },
      {
        lab: LAKESIDE,
        instrument: "Transmission diffractometer (Mo)",
        turnaroundDays: 12,
        notes: "We can take the nanomaterial; GHS06 samples need our safety officer's approval first.",
      },
    ],
    accept: GRANITE,
    end: "samples_in_transit",
    shipping: ["Ashbourne Medical Couriers", "AMC-55120-PSF"],
  },
  {
    title: "Transmission scan of LFP coating trial HC-2624",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_transmission",
    samples: [{ fields: lfp("HC-2624-A", "LiFePO4, olivine, carbon-coated") }],
    range: [5, 60],
    currency: "USD",
    quotes: [
      {
        lab: LAKESIDE,
        instrument: "Transmission diffractometer (Mo)",
        turnaroundDays: 12,
        notes: "Capillary transmission on Mo, no fluorescence from the iron.",
      },
    ],
    accept: LAKESIDE,
    end: "samples_received",
    shipping: ["Nordlys Freight", "NF-77310-2624"],
  },
  {
    title: "Form screen of salt candidates PSF-144",
    client: PINECREST,
    by: "member@pinecrest.example",
    technique: "powder_reflection",
    samples: [
      { fields: organic("PSF-144-HCl", "C15H18ClNO2", "PSF-144 hydrochloride", "monoclinic", "P", [8.91, 10.77, 15.32, 90, 95.2, 90]) },
      { fields: organic("PSF-144-MSA", "C16H21NO5S", "PSF-144 mesylate", "triclinic", "P", [7.35, 9.82, 12.46, 84.1, 79.6, 71.3]) },
    ],
    range: [5, 45],
    currency: "EUR",
    quotes: [
      { lab: GRANITE, instrument: "Reflection diffractometer A (Cu)", turnaroundDays: 8, notes: "Zero-background silicon holders for the small amounts." },
    ],
    accept: GRANITE,
    end: "measuring",
    shipping: ["Ashbourne Medical Couriers", "AMC-55087-PSF"],
  },
  {
    title: "Lattice check of LFP production lot HC-2645",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      { fields: lfp("HC-2645-1"), scan: { fileName: "HC-2645-1_Co_15-110.xy", simulate: lfpScan(2645_1) } },
      {
        fields: lfp("HC-2645-2", "LiFePO4, olivine (triphylite), TiO2-coated trial"),
        scan: { fileName: "HC-2645-2_Co_15-110.xy", simulate: lfpScan(2645_3, 1200) },
      },
    ],
    range: [15, 110],
    currency: "EUR",
    quotes: [{ lab: GRANITE, instrument: "Reflection diffractometer B (Co)", turnaroundDays: 8, notes: "Cobalt tube: no iron fluorescence." }],
    accept: GRANITE,
    end: "data_delivered",
    shipping: ["Nordlys Freight", "NF-77402-2645"],
  },
  {
    title: "Olivine with Li3PO4 residue in LFP batch HC-2681",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: { ...lfp("HC-2681-A"), phases: [phaseRow("Li3PO4 (β)", "orthorhombic", "P", LI3PO4_DECLARED)] },
        scan: { fileName: "HC-2681-A_Co_15-110.xy", simulate: lfpWithResidueScan },
      },
    ],
    range: [15, 110],
    currency: "EUR",
    quotes: [
      {
        lab: GRANITE,
        instrument: "Reflection diffractometer B (Co)",
        turnaroundDays: 8,
        notes: "Both phases are refined; the residue is reported with its cell.",
      },
    ],
    accept: GRANITE,
    end: "data_delivered",
    shipping: ["Nordlys Freight", "NF-77468-2681"],
  },
  {
    title: "Acceptance test of LFP production lot HC-2693",
    client: HALVORSEN,
    by: "member@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: { ...lfp("HC-2693-1"), window: LFP_LOT_WINDOW },
        scan: { fileName: "HC-2693-1_Co_15-110.xy", simulate: lfpOffWindowScan },
      },
    ],
    range: [15, 110],
    currency: "EUR",
    quotes: [{ lab: GRANITE, instrument: "Reflection diffractometer B (Co)", turnaroundDays: 8, notes: "Cell refined against your acceptance window." }],
    accept: GRANITE,
    end: "data_delivered",
    shipping: ["Nordlys Freight", "NF-77471-2693"],
  },
  {
    title: "Form I or Form II of API batch PSF-163",
    client: PINECREST,
    by: "owner@pinecrest.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: {
          ...organic("PSF-163-B", "C18H20N2O3", "PSF-163 Form I", "monoclinic", "P", cellList(PSF163_FORM_I)),
          candidates: [phaseRow("PSF-163 Form II", "orthorhombic", "P", PSF163_FORM_II)],
        },
        scan: { fileName: "PSF-163-B_Cu_5-60.xy", simulate: psf163Scan },
      },
    ],
    range: [5, 60],
    currency: "EUR",
    quotes: [
      {
        lab: GRANITE,
        instrument: "Reflection diffractometer A (Cu)",
        turnaroundDays: 8,
        notes: "Zero-background silicon holder; both forms are tried against the scan.",
      },
    ],
    accept: GRANITE,
    end: "data_delivered",
    shipping: ["Ashbourne Medical Couriers", "AMC-55133-PSF"],
  },
  {
    title: "Capillary series of solvate PSF-127",
    client: PINECREST,
    by: "owner@pinecrest.example",
    technique: "powder_transmission",
    samples: [
      { fields: organic("PSF-127-1", "C14H12N2O2", "PSF-127 ethanol solvate", "monoclinic", "C", [18.2, 6.91, 12.74, 90, 107.3, 90], "capillary") },
      { fields: organic("PSF-127-2", "C14H12N2O2", "PSF-127 ethanol solvate", "monoclinic", "C", [18.2, 6.91, 12.74, 90, 107.3, 90], "capillary") },
    ],
    range: [5, 40],
    currency: "USD",
    quotes: [{ lab: LAKESIDE, instrument: "Transmission diffractometer (Mo)", turnaroundDays: 12, notes: "Sealed 0.7 mm capillaries, please." }],
    accept: LAKESIDE,
    end: "refused_on_arrival",
    reason:
      "The parcel holds three unlabelled open vials instead of the two sealed capillaries declared (PSF-127-1 and -2). We cannot accept undeclared material; it goes back to the sender.",
    shipping: ["Ashbourne Medical Couriers", "AMC-55064-PSF"],
  },
  {
    title: "Impurity check of NMC lot HC-2655",
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: nmc("HC-2655-A", "LiNi0.6Mn0.2Co0.2O2", "NMC622 layered oxide (R-3m)"),
        scan: { fileName: "HC-2655-A_Co_15-120.xy", simulate: nmcDisputedScan },
      },
    ],
    range: [15, 120],
    currency: "EUR",
    quotes: [{ lab: GRANITE, instrument: "Reflection diffractometer B (Co)", turnaroundDays: 8, notes: "Report with phase identification included." }],
    accept: GRANITE,
    end: "disputed",
    reason:
      "The lab's report calls lot HC-2655 single-phase, but the lattice check puts the scan under review: unindexed lines near 18°, 25° and 27° 2θ may belong to another phase, and the report does not mention them. We ask for the impurity to be identified or part of the price refunded.",
    shipping: ["Nordlys Freight", "NF-77455-2655"],
  },
];

// ─── Helpers ───

async function orgId(name: string) {
  const [org] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.name, name));
  if (!org) throw new Error(`demo organisation ${name} is missing; seed the base demo first`);
  return org.id;
}

async function person(email: string) {
  const [user] = await db.select().from(schema.users).where(eq(schema.users.email, email));
  if (!user) throw new Error(`demo person ${email} is missing`);
  return user;
}

/** The client's request as it is now in the database, after a step of the scenario has changed it. */
async function ownRequest(requestId: string, clientId: string) {
  const request = await ownRequestOf(requestId, clientId);
  if (!request) throw new Error(`demo scenario: request ${requestId} of organisation ${clientId} is missing`);
  return request;
}

const sha256 = (bytes: Uint8Array) => createHash("sha256").update(bytes).digest("hex");

function must<T extends { ok: boolean }>(what: string, result: T): Extract<T, { ok: true }> {
  if (!result.ok) throw new Error(`demo scenario: ${what} was refused: ${JSON.stringify(result)}`);
  return result as Extract<T, { ok: true }>;
}

/** The sample's invented safety data sheet, stored where the hazards step's upload would put it. */
async function uploadSds(request: { id: string; organisationId: string }, label: string, hazards: Hazards) {
  const fileName = `${label}-safety-data-sheet.pdf`;
  const bytes = simplePdf([
    `Safety data sheet - ${label} (Diffractory demo)`,
    `Pictograms: ${(hazards.ghs ?? []).join(", ") || "none"}   Hazard statements: ${hazards.hStatements ?? "none"}`,
    ...Object.entries(hazards.special ?? {}).map(([category, e]) => `Special: ${category} - ${e.details}`),
    hazards.handlingNotes ?? "",
    SDS_NOTE,
  ]);
  const key = storageKeyFor(sdsPrefix(request), fileName);
  await putObject(key, bytes, "application/pdf");
  return { sdsStorageKey: key, sdsFileName: fileName, sdsSha256: sha256(bytes) };
}

/** Posts the request through the wizard's steps; stops at the hazards step for a draft. */
async function postRequest(spec: ScenarioRequest, clientId: string, userId: string) {
  const steps = SamplesStepSchema.parse({ title: spec.title, technique: spec.technique, samples: spec.samples.map((s) => s.fields) });
  let request = await createDraft(clientId, userId, steps);
  const samples = await samplesOf(request.id);
  const hazards = [];
  for (const [i, s] of spec.samples.entries()) {
    const h = s.hazards ?? {};
    const declared = (h.ghs?.length ?? 0) > 0 || Object.keys(h.special ?? {}).length > 0;
    hazards.push(
      SampleHazardSchema.parse({
        id: samples[i].id,
        ghs: h.ghs ?? [],
        hStatements: h.hStatements ?? "",
        special: h.special ?? {},
        handlingNotes: h.handlingNotes ?? "",
        afterMeasurement: h.afterMeasurement ?? "return",
        ...(declared ? await uploadSds(request, s.fields.label, h) : {}),
      }),
    );
  }
  const saved = await saveHazards(request, hazards);
  if (saved.fieldErrors) throw new Error(`demo scenario: hazards of ${spec.title}: ${JSON.stringify(saved.fieldErrors)}`);
  if (spec.end === "draft") return ownRequest(request.id, clientId);
  request = await ownRequest(request.id, clientId);
  await saveMeasurement(
    request,
    MeasurementStepSchema.parse({
      rangeKind: "two_theta",
      rangeMin: spec.range[0],
      rangeMax: spec.range[1],
      preferredSource: "any",
      temperaturePoints: "",
      atmosphere: "air",
      quality: "standard",
      deadline: isoDate(45),
      budget: spec.budget ?? "",
      currency: spec.currency,
    }),
  );
  request = await ownRequest(request.id, clientId);
  const visibility = await saveVisibility(request, "open", []);
  if (visibility.fieldErrors) throw new Error(`demo scenario: visibility of ${spec.title}`);
  request = await ownRequest(request.id, clientId);
  const published = await publishRequest(request, userId);
  if (published.problems.length) throw new Error(`demo scenario: ${spec.title} could not be published: ${published.problems.join(" ")}`);
  return ownRequest(request.id, clientId);
}

/** The lab reads the hazard declaration, acknowledges it, and sends a quote drafted from its price list. */
async function quoteAs(spec: QuoteSpec, requestId: string, clientId: string) {
  const labId = await orgId(spec.lab);
  const manager = await person(LAB_PEOPLE[spec.lab].manager);
  await acknowledgeHazards(requestId, labId, manager.id);
  const request = await ownRequest(requestId, clientId);
  const samples = await samplesOf(requestId);
  const instrument = (await instrumentsOf(labId)).find((i) => i.name === spec.instrument);
  if (!instrument) throw new Error(`demo scenario: ${spec.lab} has no instrument ${spec.instrument}`);
  const prices = await priceListOf(labId);
  let items = draftLineItems(request, samples, prices).map((i) => ({ description: i.description, quantity: i.quantity, unitPrice: i.unitMinor }));
  // A lab quoting outside its listed technique prices the measurement by hand, as in the quote builder.
  if (!items.some((i) => i.description.includes("per sample") && !i.description.startsWith("Sample preparation"))) {
    items = [
      {
        description: "Capillary transmission measurement, per sample",
        quantity: samples.length,
        unitPrice: prices?.perSampleMinor.powder_transmission ?? 20_000,
      },
      ...items,
    ];
  }
  const sent: SendQuoteResult = await sendQuote(request, labId, manager.id, {
    items,
    validUntil: spec.lapsed ? isoDate(-3) : isoDate(21),
    turnaroundDays: spec.turnaroundDays,
    instrumentId: instrument.id,
    notes: spec.notes,
  });
  const { quoteId } = must(`the quote of ${spec.lab} on ${request.title}`, sent);
  if (spec.withdrawn) {
    const w = await withdrawQuote(quoteId, labId, manager.id);
    if (w.error) throw new Error(`demo scenario: ${w.error}`);
  }
  return { quoteId, labId };
}

/** Takes an accepted quote's order through payment and the physical steps up to `end`. */
async function runOrder(spec: ScenarioRequest, orderId: string, client: { id: string; email: string }) {
  const people = LAB_PEOPLE[spec.accept!];
  const manager = await person(people.manager);
  const operator = await person(people.operator);
  await payOrder(orderId, client);
  // An invented carrier's number made from the order's number, never from its id.
  const [{ number }] = await db.select({ number: schema.orders.number }).from(schema.orders).where(eq(schema.orders.id, orderId));
  const [carrier, tracking] = spec.shipping ?? ["Nordlys Freight", `NF-${number.replace(/\D/g, "")}`];
  await markShipped(orderId, client.id, carrier, tracking);
  if (spec.end === "samples_in_transit") return;
  if (spec.end === "refused_on_arrival") {
    await refuseOnArrival(orderId, manager.id, spec.reason!);
    return;
  }
  await markReceived(orderId, manager.id, "Parcel opened in the receiving hood; contents match the declaration.");
  if (spec.end === "samples_received") return;
  await startMeasuring(orderId, operator.id, "Mounted and measuring.");
  if (spec.end === "measuring") return;
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, orderId));
  const samples = await samplesOf(order.requestId);
  for (const [i, s] of spec.samples.entries()) {
    if (!s.scan) continue;
    const text = formatScanAsXy(s.scan.simulate(), `Diffractory demo scan ${s.scan.fileName} (simulated, invented sample)`);
    const outcome = await storeCheckedScan({ orderId, sampleId: samples[i].id, fileName: s.scan.fileName, text, uploadedBy: operator.id });
    if (outcome.status !== "done") throw new Error(`demo scenario: the check of ${s.scan.fileName} did not finish: ${JSON.stringify(outcome)}`);
  }
  await markDelivered(orderId, operator.id, "Scans and the report are in the data room.", { confirmed: true });
  if (spec.end === "data_delivered") return;
  await openDispute(orderId, client.id, spec.reason!);
}

/** Makes one request of the scenario and takes it to its end state; false when it is there already. */
export async function seedScenarioRequest(spec: ScenarioRequest) {
  const clientId = await orgId(spec.client);
  const [existing] = await db
    .select({ id: schema.requests.id })
    .from(schema.requests)
    .where(and(eq(schema.requests.organisationId, clientId), eq(schema.requests.title, spec.title)));
  if (existing) return false;
  const client = await person(spec.by);
  const request = await postRequest(spec, clientId, client.id);
  if (spec.end === "draft") return true;
  const quotes = [];
  for (const q of spec.quotes) quotes.push({ ...(await quoteAs(q, request.id, clientId)), lab: q.lab });
  await lapseExpiredQuotes();
  if (spec.end === "open") return true;
  if (spec.end === "withdrawn") {
    const done = await withdrawRequest(await ownRequest(request.id, clientId), client.id);
    if (done.error) throw new Error(`demo scenario: ${spec.title}: ${done.error}`);
    return true;
  }
  if (spec.end === "expired") {
    // Its deadline has passed (a date the form would refuse), and the expiry job's own function closes it.
    await db
      .update(schema.requests)
      .set({ deadline: isoDate(-2) })
      .where(eq(schema.requests.id, request.id));
    await expireOverdueRequests(new Date(), [request.id]);
    return true;
  }
  const chosen = quotes.find((q) => q.lab === spec.accept);
  if (!chosen) throw new Error(`demo scenario: ${spec.title} has no quote from ${spec.accept}`);
  const accepted = must(`accepting ${spec.accept}'s quote on ${spec.title}`, await acceptQuote(request.id, chosen.quoteId, clientId, client.id));
  await runOrder(spec, accepted.orderId, client);
  return true;
}

// ─── Meridian's vetting application ───

/** Meridian hands in its application with a LaB6 calibration scan, checked as the vetting screen checks it. */
async function seedMeridianApplication() {
  const labId = await orgId("Meridian Analytical");
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, labId));
  if (!lab || lab.vettingState !== "applied" || lab.calibrationCheck) return false;
  const manager = await person("lab@meridian.example");
  const prefix = vettingPrefix(labId);
  const certificateBytes = simplePdf([
    "Certificate of accreditation MA-17025-0098 (Diffractory demo, invented)",
    "Meridian Analytical, Porto Meridiano: testing laboratory, X-ray powder diffraction.",
    "Valid until 30 June 2028.",
  ]);
  const certificateKey = storageKeyFor(prefix, "accreditation-MA-17025-0098.pdf");
  await putObject(certificateKey, certificateBytes, "application/pdf");
  const scanName = "LaB6-660c_benchtop-Cu_15-120.xy";
  // LaB6 simulated from the certified cell with a small zero error, as a freshly aligned benchtop would give.
  const text = formatScanAsXy(
    simulatePattern({
      structure: LANTHANUM_HEXABORIDE,
      radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
      twoThetaMin: 15,
      twoThetaMax: 120,
      step: 0.01,
      zeroShift: 0.012,
      background: { constant: 90, slope: -0.3 },
      noise: { seed: 660 },
    }),
    "LaB6 NIST SRM 660c line-position check, benchtop diffractometer (Cu), Diffractory demo (simulated)",
  );
  const scanBytes = new TextEncoder().encode(text);
  const scanKey = storageKeyFor(prefix, scanName);
  await putObject(scanKey, scanBytes, "text/plain");
  const outcome = checkCalibrationScan(text, {
    standard: "lab6_srm660c",
    instrumentName: "Benchtop diffractometer (Cu)",
    anode: "Cu",
    monochromation: "k_beta_filtered",
    fileName: scanName,
  });
  if (!outcome.ok) throw new Error(`demo scenario: Meridian's calibration scan could not be checked: ${outcome.error}`);
  await submitApplication({
    labId,
    actorUserId: manager.id,
    description: "Independent analytical lab in Porto Meridiano with a benchtop copper diffractometer, applying to sell reflection measurements of powders.",
    accreditationNumber: "MA-17025-0098",
    accreditationExpiry: "2028-06-30",
    attestation: LICENCE_STATEMENT,
    attestedName: "Tiago Amaral Sousa",
    standard: "lab6_srm660c",
    certificate: {
      storageKey: certificateKey,
      fileName: "accreditation-MA-17025-0098.pdf",
      contentType: "application/pdf",
      sizeBytes: certificateBytes.byteLength,
      sha256: sha256(certificateBytes),
    },
    scan: { storageKey: scanKey, fileName: scanName, contentType: "text/plain", sizeBytes: scanBytes.byteLength, sha256: sha256(scanBytes) },
    check: outcome.check,
  });
  return true;
}

/** Seeds what is missing of the scenario; returns how many requests were made this time. */
export async function seedDemoScenario() {
  let made = 0;
  for (const spec of SCENARIO) if (await seedScenarioRequest(spec)) made++;
  const meridian = await seedMeridianApplication();
  return { requests: made, meridianApplication: meridian };
}
