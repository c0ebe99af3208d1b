// Demo scans for the delivered demo orders: simulated by the engine from invented cells, stored, and checked.
// One scan confirms its declared cell, one carries an impurity phase (review), one is another phase (inconsistent).
import { createHash } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Cell, CrystalSystem, Centering, Radiation } from "~/diffraction";
import { formatScanAsXy, simulatePattern, type SimulatedScan } from "~/diffraction/simulate";
import { LITHIUM_IRON_PHOSPHATE, RUTILE } from "~/diffraction/structures";
import { runScanCheck } from "~/models/checks/scan-check.server";
import { putObject } from "~/models/files/storage.server";

export const CO: Radiation = { kind: "anode", anode: "Co", monochromation: "k_alpha_doublet" };
export const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };

interface DemoSample {
  label: string;
  formula: string;
  elements: string[];
  expectedPhase: string;
  system: CrystalSystem;
  centering: Centering;
  cell: Cell;
}

interface DemoScan {
  orderTitle: string;
  instrumentName: string;
  sample: DemoSample;
  fileName: string;
  simulate: () => SimulatedScan;
  /** What the check is expected to say, for the seed's own sanity message. */
  expected: "consistent" | "review" | "inconsistent";
}

// Approximate olivine cell as a client would declare it (rounded literature values, from memory).
export const LFP_DECLARED: Cell = { a: 10.33, b: 6.01, c: 4.69, alpha: 90, beta: 90, gamma: 90 };
/** An LFP sample's or material's declaration as its columns (samples and materials share them). */
export const LFP_DECLARATION = {
  formula: "LiFePO4",
  form: "powder",
  expectedPhase: "LiFePO4, olivine (triphylite)",
  crystalSystem: "orthorhombic",
  centering: "P",
  cellA: LFP_DECLARED.a,
  cellB: LFP_DECLARED.b,
  cellC: LFP_DECLARED.c,
  cellAlpha: 90,
  cellBeta: 90,
  cellGamma: 90,
} as const;
// The "true" cell of the demo lot: invented, a little off the declaration as a real batch would be.
export const LFP_LOT: Cell = { a: 10.326, b: 6.006, c: 4.695, alpha: 90, beta: 90, gamma: 90 };
export const LFP_SCAN = {
  twoThetaMin: 15,
  twoThetaMax: 110,
  step: 0.02,
  radiation: CO,
  background: { constant: 120, slope: -0.4 },
  scale: 8000,
  zeroShift: 0.03,
};

const lfpSample = (label: string, phase = "LiFePO4, olivine (triphylite)"): DemoSample => ({
  label,
  formula: "LiFePO4",
  elements: ["Fe", "Li", "O", "P"],
  expectedPhase: phase,
  system: "orthorhombic",
  centering: "P",
  cell: LFP_DECLARED,
});

const DEMO_SCANS: DemoScan[] = [
  {
    orderTitle: "Lattice check of LFP reference lot HC-2398",
    instrumentName: "Reflection diffractometer B (Co)",
    sample: lfpSample("HC-2398-1"),
    fileName: "HC-2398-1_Co_15-110.xy",
    expected: "consistent",
    simulate: () => simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: LFP_LOT, noise: { seed: 2398_1 } }),
  },
  {
    orderTitle: "Lattice check of LFP reference lot HC-2398",
    instrumentName: "Reflection diffractometer B (Co)",
    sample: lfpSample("HC-2398-2", "LiFePO4, olivine (triphylite), TiO2-coated trial"),
    fileName: "HC-2398-2_Co_15-110.xy",
    expected: "review",
    simulate: () => {
      // The olivine lot with some rutile from the coating mixed in: one strong line of another phase.
      const main = simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell: LFP_LOT, noise: { seed: 2398_2 } });
      const impurity = simulatePattern({ ...LFP_SCAN, structure: RUTILE, background: { constant: 0 }, scale: 1200, zeroShift: 0.03, noise: { seed: 2398_3 } });
      return { ...main, intensity: main.intensity.map((v, i) => v + impurity.intensity[i]), reflections: main.reflections };
    },
  },
  {
    orderTitle: "Polymorph form II confirmation PSF-118",
    instrumentName: "Reflection diffractometer A (Cu)",
    sample: {
      label: "PSF-118-B",
      formula: "C16H14N2O3",
      elements: ["C", "H", "N", "O"],
      expectedPhase: "PSF-118 form II",
      system: "orthorhombic",
      centering: "P",
      // Invented cell of the declared form II.
      cell: { a: 7.95, b: 10.42, c: 12.88, alpha: 90, beta: 90, gamma: 90 },
    },
    fileName: "PSF-118-B_Cu_5-60.xy",
    expected: "inconsistent",
    // The batch turned out to be form I: an invented monoclinic cell, so the pattern is another phase's.
    simulate: () =>
      simulatePattern({
        twoThetaMin: 5,
        twoThetaMax: 60,
        step: 0.02,
        radiation: CU,
        cell: { a: 8.62, b: 9.71, c: 11.35, alpha: 90, beta: 103.2, gamma: 90 },
        system: "monoclinic",
        centering: "P",
        background: { constant: 150, slope: -1 },
        scale: 6000,
        noise: { seed: 118 },
      }),
  },
];

async function orderByTitle(title: string) {
  const [row] = await db
    .select({ order: schema.orders, quote: schema.quotes })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.quotes, eq(schema.quotes.id, schema.orders.quoteId))
    .where(eq(schema.requests.title, title));
  return row ?? null;
}

/** The sample of the order's request with this label, added (with its declaration) when missing. */
async function ensureSample(requestId: string, s: DemoSample, position: number) {
  const [found] = await db
    .select()
    .from(schema.samples)
    .where(and(eq(schema.samples.requestId, requestId), eq(schema.samples.label, s.label)));
  if (found) return found;
  const [created] = await db
    .insert(schema.samples)
    .values({
      requestId,
      position,
      label: s.label,
      formula: s.formula,
      elements: s.elements,
      form: "powder",
      massMg: 400,
      expectedPhase: s.expectedPhase,
      crystalSystem: s.system,
      centering: s.centering,
      cellA: s.cell.a,
      cellB: s.cell.b,
      cellC: s.cell.c,
      cellAlpha: s.cell.alpha,
      cellBeta: s.cell.beta,
      cellGamma: s.cell.gamma,
    })
    .returning();
  return created;
}

/**
 * Stores a demo scan as a delivered file of the order (as a finished upload would leave it) and runs its
 * lattice check in-process, so no worker is needed and the verdict is there when the seed returns.
 */
export async function storeCheckedScan(input: {
  orderId: string;
  sampleId: string;
  fileName: string;
  text: string;
  uploadedBy: string | null;
  storedAt?: Date;
}) {
  const bytes = new TextEncoder().encode(input.text);
  const storageKey = `orders/${input.orderId}/demo/${input.fileName}`;
  await putObject(storageKey, bytes, "text/plain");
  const [file] = await db
    .insert(schema.orderFiles)
    .values({
      orderId: input.orderId,
      sampleId: input.sampleId,
      kind: "scan",
      name: input.fileName,
      version: 1,
      sizeBytes: bytes.byteLength,
      contentType: "text/plain",
      sha256: createHash("sha256").update(bytes).digest("hex"),
      storageKey,
      state: "stored",
      uploadedBy: input.uploadedBy,
      uploadedVia: "browser",
      storedAt: input.storedAt ?? new Date(),
    })
    .returning();
  return runScanCheck(file.id, { finalAttempt: true });
}

/**
 * Stores the demo scans of the delivered demo orders and checks them in-process (no worker needed).
 * Idempotent: a scan already stored for its order is left as it is. Returns the checks' verdicts.
 */
export async function seedDemoScans() {
  const [labUser] = await db.select().from(schema.users).where(eq(schema.users.email, "lab@graniteridge.example"));
  const outcomes: { fileName: string; checkId: string | null; expected: string; verdict: string | null }[] = [];
  let position = 0;
  for (const scan of DEMO_SCANS) {
    const found = await orderByTitle(scan.orderTitle);
    if (!found) continue;
    const { order, quote } = found;
    const [instrument] = await db
      .select()
      .from(schema.instruments)
      .where(and(eq(schema.instruments.labId, order.labId), eq(schema.instruments.name, scan.instrumentName)));
    // The check takes its radiation from the quote's instrument; demo quotes are made without one.
    if (instrument && !quote.instrumentId) {
      await db.update(schema.quotes).set({ instrumentId: instrument.id }).where(eq(schema.quotes.id, quote.id));
      quote.instrumentId = instrument.id;
    }
    const sample = await ensureSample(order.requestId, scan.sample, position++);
    const [existing] = await db
      .select()
      .from(schema.orderFiles)
      .where(and(eq(schema.orderFiles.orderId, order.id), eq(schema.orderFiles.name, scan.fileName)));
    if (existing) {
      const [check] = await db.select().from(schema.scanChecks).where(eq(schema.scanChecks.fileId, existing.id));
      outcomes.push({ fileName: scan.fileName, checkId: check?.id ?? null, expected: scan.expected, verdict: check?.verdict ?? null });
      continue;
    }
    const sim = scan.simulate();
    const outcome = await storeCheckedScan({
      orderId: order.id,
      sampleId: sample.id,
      fileName: scan.fileName,
      text: formatScanAsXy(sim, `Diffractory demo scan ${scan.fileName} (simulated, invented sample)`),
      uploadedBy: labUser?.id ?? null,
      storedAt: order.deliveredAt ?? new Date(),
    });
    outcomes.push({
      fileName: scan.fileName,
      checkId: outcome.status === "skipped" ? null : outcome.checkId,
      expected: scan.expected,
      verdict: outcome.status === "done" ? outcome.verdict : null,
    });
  }
  return outcomes;
}
