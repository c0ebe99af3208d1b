// Demo calibration history (docs/design.md#calibration-on-record): every demo instrument has a year of monthly
// calibration scans of its certified standard, each simulated by the engine from the certificate's cell plus a
// small invented instrument error (a few 1e-5 Å, a zero error of a few thousandths of a degree) and recorded with
// recordCalibration, backdated, as a lab entering its past year would. The last scan is a few days old, so no
// instrument is overdue when the seed ends. Reflection diffractometer B drifts mildly upwards over the year and
// still passes. The seeds are chosen so every scan passes its judgement (the demo keeps its instruments in matching).
// Idempotent: an instrument with calibrations on record is left alone.
import { eq, inArray } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { formatScanAsXy, mulberry32, simulatePattern } from "~/diffraction/simulate";
import { LANTHANUM_HEXABORIDE, SILICON } from "~/diffraction/structures";
import { CALIBRATION_STANDARDS, type CalibrationStandard } from "~/domain/vetting";
import { recordCalibration } from "~/models/labs/calibration.server";

const DAY = 86_400_000;
/** Scans on record per instrument: one a month for a year. */
export const DEMO_CALIBRATIONS_PER_INSTRUMENT = 12;

interface DemoCalibration {
  instrumentName: string;
  standard: CalibrationStandard;
  twoTheta: [number, number];
  step: number;
  /** Days before the seed of the latest scan. */
  lastDaysAgo: number;
  /** The instrument's invented systematic error in a (Å) and its month-to-month creep (Å per month). */
  offsetA: number;
  driftPerMonth: number;
  seed: number;
}

const PLAN: DemoCalibration[] = [
  {
    instrumentName: "Reflection diffractometer A (Cu)",
    standard: "si_srm640c",
    twoTheta: [15, 140],
    step: 0.02,
    lastDaysAgo: 4,
    offsetA: 0.00001,
    driftPerMonth: 0,
    seed: 640_01,
  },
  {
    instrumentName: "Reflection diffractometer B (Co)",
    standard: "si_srm640c",
    twoTheta: [15, 140],
    step: 0.02,
    lastDaysAgo: 9,
    offsetA: -0.00002,
    // A mild upward creep (a tube ageing, a goniometer settling): visible on the chart, inside the limits.
    driftPerMonth: 0.000004,
    seed: 640_02,
  },
  {
    instrumentName: "Transmission diffractometer (Mo)",
    standard: "lab6_srm660c",
    twoTheta: [8, 60],
    step: 0.01,
    lastDaysAgo: 6,
    offsetA: 0.00002,
    driftPerMonth: 0,
    seed: 660_03,
  },
  {
    instrumentName: "Benchtop diffractometer (Cu)",
    standard: "si_srm640c",
    twoTheta: [15, 120],
    step: 0.02,
    lastDaysAgo: 12,
    offsetA: -0.00001,
    driftPerMonth: 0,
    seed: 641_04,
  },
];

const STRUCTURES = { si_srm640c: SILICON, lab6_srm660c: LANTHANUM_HEXABORIDE } as const;

/** Normal deviates from a seeded uniform source (Box–Muller). */
function gaussian(uniform: () => number) {
  return () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
}

/** Records the year of calibrations; returns how many scans were recorded this run. */
export async function seedDemoCalibrations(now = new Date()) {
  const instruments = await db
    .select()
    .from(schema.instruments)
    .where(
      inArray(
        schema.instruments.name,
        PLAN.map((p) => p.instrumentName),
      ),
    );
  let recorded = 0;
  for (const plan of PLAN) {
    const instrument = instruments.find((i) => i.name === plan.instrumentName);
    if (!instrument?.anode || !["Cu", "Co", "Mo"].includes(instrument.anode)) continue;
    const [existing] = await db
      .select({ id: schema.instrumentCalibrations.id })
      .from(schema.instrumentCalibrations)
      .where(eq(schema.instrumentCalibrations.instrumentId, instrument.id))
      .limit(1);
    if (existing) continue;
    const certified = CALIBRATION_STANDARDS[plan.standard].a;
    const normal = gaussian(mulberry32(plan.seed));
    const last = new Date(now.getTime() - plan.lastDaysAgo * DAY);
    last.setUTCHours(8, 30, 0, 0);
    for (let k = DEMO_CALIBRATIONS_PER_INSTRUMENT - 1; k >= 0; k--) {
      const measuredAt = new Date(last);
      measuredAt.setUTCMonth(measuredAt.getUTCMonth() - k);
      const month = DEMO_CALIBRATIONS_PER_INSTRUMENT - 1 - k;
      const a = certified + plan.offsetA + plan.driftPerMonth * month + normal() * 0.000015;
      const scan = simulatePattern({
        structure: STRUCTURES[plan.standard],
        cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
        radiation: {
          kind: "anode",
          anode: instrument.anode as "Cu" | "Co" | "Mo",
          monochromation: instrument.monochromation === "k_alpha1_only" ? "k_alpha1_only" : "k_alpha_doublet",
        },
        twoThetaMin: plan.twoTheta[0],
        twoThetaMax: plan.twoTheta[1],
        step: plan.step,
        zeroShift: normal() * 0.004,
        background: { constant: 100, slope: -0.3 },
        noise: { seed: plan.seed + month },
      });
      const day = measuredAt.toISOString().slice(0, 10);
      const fileName = `${plan.standard}_${instrument.anode}_${day}.xy`;
      const text = formatScanAsXy(
        scan,
        `${CALIBRATION_STANDARDS[plan.standard].label} calibration scan, ${instrument.name}, ${day} (Diffractory demo, simulated)`,
      );
      const outcome = await recordCalibration(instrument.id, text, fileName, plan.standard, measuredAt, null);
      if (!outcome.ok) throw new Error(`demo: ${instrument.name}'s calibration scan of ${day} could not be recorded: ${outcome.error}`);
      // The demo must keep its instruments in matching: a failing scan is a fault of the seed.
      if (!outcome.judgement.passed) throw new Error(`demo: ${instrument.name}'s calibration scan of ${day} failed: ${outcome.judgement.problems.join(" ")}`);
      recorded++;
    }
  }
  return recorded;
}
