// The lab's accuracy on record on the real PostgreSQL (docs/design.md#calibration-on-record): repeat calibration
// scans of a certified standard, the hourly overdue sweep, withdrawal from matching and return after a passing
// scan, the admins told, and the public figures of the directory and the lab profile.
import { and, eq, gte, isNotNull } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";
import type { Instrument } from "~/db/schema";
import { accuracyText, onTimeText } from "~/domain/calibration-record";
import { APPROVAL_TOLERANCE_A } from "~/domain/vetting";
import { putObject } from "~/models/files/storage.server";
import { calibrationPrefix, instrumentAccuracy, markOverdueCalibrations, onTimeRecord, recordCalibration, recordSince } from "~/models/labs/calibration.server";
import { matchLabsForRequest } from "~/models/labs/matching.server";
import { loader as labsApi } from "~/routes/api/labs";
import { action as calibrationAction, loader as calibrationLoader } from "~/routes/lab/calibration";
import { action as uploadAction } from "~/routes/lab/calibration-upload";
import { loader as profileLoader } from "~/routes/public/lab-profile";
import { callRoute, formRequest, getRequest, sessionCookieFor } from "./route-call";

const LAB_MANAGER = "lab@graniteridge.example";
const OPERATOR = "operator@graniteridge.example";
// NIST SRM 640c certificate value (docs/reference-values.md#certified-lattice-parameters).
const SI_640C_A = 5.4311946;
const DAY = 86_400_000;

let instrument: Instrument;
let requestId: string;
let labId: string;

/** A simulated silicon calibration scan on the instrument's own source, from the given cell length (Å). */
function siliconScan(a: number, seed: number) {
  const sim = simulatePattern({
    structure: SILICON,
    cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode: instrument.anode as "Co", monochromation: instrument.monochromation },
    twoThetaMin: 15,
    twoThetaMax: 140,
    step: 0.02,
    background: { constant: 120, slope: -0.3 },
    noise: { seed },
  });
  return formatScanAsXy(sim, "Silicon calibration scan (simulated)");
}

async function current() {
  const [row] = await db.select().from(schema.instruments).where(eq(schema.instruments.id, instrument.id));
  return row;
}

/** The instrument's fit for the demo's iron phosphate request (which it fits when in order). */
async function fitOfInstrument() {
  const granite = (await matchLabsForRequest(requestId)).find((m) => m.labId === labId)!;
  return granite.instruments.find((i) => i.instrumentId === instrument.id)!;
}

async function lettersOf(kind: string) {
  return db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, kind));
}

// The passing scans are one and the same simulated scan of the certified cell, so their deviations are equal and
// the control limits (from them) are not an accident of noise.
let passingScan: string;

beforeAll(async () => {
  await seedDemo();
  const [granite] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation"));
  labId = granite.id;
  [instrument] = await db
    .select()
    .from(schema.instruments)
    .where(and(eq(schema.instruments.labId, labId), eq(schema.instruments.name, "Reflection diffractometer B (Co)")));
  const [r] = await db.select().from(schema.requests).where(eq(schema.requests.title, "Phase check of LFP cathode batch HC-2611"));
  requestId = r.id;
  passingScan = siliconScan(SI_640C_A, 7);
}, 120_000);

describe("a lab's instrument whose calibration lapses", () => {
  it("leaves matching when the hourly sweep finds it overdue, and comes back after a passing scan", async () => {
    expect((await fitOfInstrument()).fits).toBe(true);
    const measuredAt = new Date(Date.now() - 40 * DAY);
    const first = await recordCalibration(instrument.id, passingScan, "si-640c-first.xy", "si_srm640c", measuredAt, null);
    if (!first.ok) throw new Error(first.error);
    expect(first.judgement.passed).toBe(true);
    // The engine refines the certified cell back within the tolerance (docs/design.md#labs-and-vetting).
    expect(Math.abs(first.calibration.deviationA!)).toBeLessThan(APPROVAL_TOLERANCE_A);
    let row = await current();
    expect(row.calibrationState).toBe("ok");
    // Monthly by default: due 30 days after the scan, 10 days ago.
    expect(row.calibrationDueAt!.getTime()).toBe(measuredAt.getTime() + 30 * DAY);
    expect((await fitOfInstrument()).fits).toBe(true);

    const adminLettersBefore = (await lettersOf("calibration_lapsed")).length;
    expect(await markOverdueCalibrations(new Date(), [instrument.id])).toBe(1);
    row = await current();
    expect(row.calibrationState).toBe("overdue");
    const withdrawn = await fitOfInstrument();
    expect(withdrawn.fits).toBe(false);
    expect(withdrawn.reasons.find((r) => !r.ok)!.text).toBe("Withdrawn from matching: its calibration scan is overdue");
    // The admins and the lab's managers are told, by e-mail through the outbox and in the app.
    const letters = (await lettersOf("calibration_lapsed")).slice(adminLettersBefore);
    expect(letters.map((l) => l.to)).toEqual(expect.arrayContaining(["admin@diffractory.example", LAB_MANAGER]));
    expect(letters[0].subject).toBe("Reflection diffractometer B (Co) at Granite Ridge Characterisation: calibration is overdue");
    // A second sweep changes nothing and tells nobody again.
    expect(await markOverdueCalibrations(new Date(), [instrument.id])).toBe(0);
    expect((await lettersOf("calibration_lapsed")).length).toBe(adminLettersBefore + letters.length);

    const again = await recordCalibration(instrument.id, passingScan, "si-640c-again.xy", "si_srm640c", new Date(), null);
    if (!again.ok) throw new Error(again.error);
    expect(again.judgement.passed).toBe(true);
    row = await current();
    expect(row.calibrationState).toBe("ok");
    expect(row.calibrationDueAt!.getTime()).toBe(again.calibration.measuredAt.getTime() + 30 * DAY);
    expect((await fitOfInstrument()).fits).toBe(true);
  });

  it("an out-of-tolerance scan marks it out of control, withdraws it and tells the admins; a passing one restores it", async () => {
    const before = (await lettersOf("calibration_lapsed")).length;
    // Limits need five passing scans (app/domain/calibration-record.ts CALIBRATION_BASELINE_MIN): three more.
    for (const name of ["si-640c-3.xy", "si-640c-4.xy", "si-640c-5.xy"]) {
      const ok = await recordCalibration(instrument.id, passingScan, name, "si_srm640c", new Date(), null);
      if (!ok.ok || !ok.judgement.passed) throw new Error(`${name} should pass`);
    }
    // A cell 0.002 Å long of the certificate: four times the tolerance.
    const off = await recordCalibration(instrument.id, siliconScan(SI_640C_A + 0.002, 8), "si-640c-off.xy", "si_srm640c", new Date(), null);
    if (!off.ok) throw new Error(off.error);
    expect(off.judgement.withinTolerance).toBe(false);
    expect(off.judgement.passed).toBe(false);
    expect(off.calibration.deviationA!).toBeGreaterThan(0.0015);
    // Five identical passing scans make the baseline (σ̂ = 0): the far point breaks rule 1 as well.
    expect(off.calibration.rulesBroken).toContain(1);
    expect((await current()).calibrationState).toBe("out_of_control");
    const fit = await fitOfInstrument();
    expect(fit.fits).toBe(false);
    expect(fit.reasons[0].text).toBe("Withdrawn from matching: its last calibration scan was out of control");
    const letters = (await lettersOf("calibration_lapsed")).slice(before);
    expect(letters.map((l) => l.to)).toEqual(expect.arrayContaining(["admin@diffractory.example", LAB_MANAGER]));
    expect(letters.find((l) => l.to === "admin@diffractory.example")!.text).toMatch(/outside the tolerance of ±0.0005 Å/);
    const notices = await db
      .select()
      .from(schema.notifications)
      .where(and(eq(schema.notifications.kind, "calibration_lapsed"), isNotNull(schema.notifications.organisationId)));
    expect(notices.some((n) => n.organisationId === labId)).toBe(true);

    const back = await recordCalibration(instrument.id, passingScan, "si-640c-back.xy", "si_srm640c", new Date(), null);
    if (!back.ok) throw new Error(back.error);
    expect(back.judgement.passed).toBe(true);
    expect((await current()).calibrationState).toBe("ok");
    expect((await fitOfInstrument()).fits).toBe(true);
  });

  it("refuses a file that is not a scan in one sentence and stores nothing", async () => {
    const count = (await db.select().from(schema.instrumentCalibrations).where(eq(schema.instrumentCalibrations.instrumentId, instrument.id))).length;
    const bad = await recordCalibration(instrument.id, "just words, no numbers\n", "notes.txt", "si_srm640c", new Date(), null);
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.error).toMatch(/^The calibration scan could not be checked: /);
    expect((await db.select().from(schema.instrumentCalibrations).where(eq(schema.instrumentCalibrations.instrumentId, instrument.id))).length).toBe(count);
  });
});

describe("the calibration screen", () => {
  it("records an uploaded scan through the manager's form and shows the history to any lab member", async () => {
    const manager = await sessionCookieFor(LAB_MANAGER);
    const target = await callRoute(
      uploadAction,
      formRequest(
        `/lab/instruments/${instrument.id}/calibration/upload`,
        { intent: "upload-target", purpose: "calibration_scan", fileName: "si.xy", size: "2048", type: "" },
        manager,
      ),
      { id: instrument.id },
    );
    expect(target.status).toBe(200);
    const key = (target.body as { target: { storageKey: string } }).target.storageKey;
    expect(key.startsWith(`${calibrationPrefix(labId, instrument.id)}/`)).toBe(true);
    await putObject(key, passingScan, "text/plain");
    const recorded = await callRoute(
      calibrationAction,
      formRequest(`/lab/instruments/${instrument.id}/calibration`, { intent: "record", standard: "si_srm640c", scanKey: key, scanName: "si.xy" }, manager),
      { id: instrument.id },
    );
    expect(recorded.status).toBe(302);
    // A key outside the instrument's prefix is refused.
    const foreign = await callRoute(
      calibrationAction,
      formRequest(
        `/lab/instruments/${instrument.id}/calibration`,
        { intent: "record", standard: "si_srm640c", scanKey: `labs/${labId}/vetting/x/si.xy`, scanName: "si.xy" },
        manager,
      ),
      { id: instrument.id },
    );
    expect(foreign.status).toBe(400);
    const interval = await callRoute(
      calibrationAction,
      formRequest(`/lab/instruments/${instrument.id}/calibration`, { intent: "set-interval", intervalDays: "14" }, manager),
      { id: instrument.id },
    );
    expect(interval.status).toBe(302);
    const row = await current();
    expect(row.calibrationIntervalDays).toBe(14);

    const page = await callRoute(calibrationLoader, getRequest(`/lab/instruments/${instrument.id}/calibration`, await sessionCookieFor(OPERATOR)), {
      id: instrument.id,
    });
    expect(page.status).toBe(200);
    const body = page.body as { canEdit: boolean; instrument: { state: string }; scans: { fileName: string; passed: boolean }[] };
    expect(body.canEdit).toBe(false);
    expect(body.instrument.state).toBe("ok");
    expect(body.scans.map((s) => s.fileName)).toContain("si.xy");
    expect(body.scans.filter((s) => !s.passed).map((s) => s.fileName)).toEqual(["si-640c-off.xy"]);
  });
});

describe("the public figures", () => {
  it("give each instrument's mean deviation and scan count over 12 months, and the lab's on-time delivery", async () => {
    const rows = await db
      .select()
      .from(schema.instrumentCalibrations)
      .where(and(eq(schema.instrumentCalibrations.instrumentId, instrument.id), gte(schema.instrumentCalibrations.measuredAt, recordSince())));
    // The mean of every scan in the window, passing or not (common practice: an arithmetic mean).
    const mean = rows.reduce((s, r) => s + r.deviationA!, 0) / rows.length;
    const accuracy = (await instrumentAccuracy(labId)).find((a) => a.instrumentId === instrument.id)!;
    expect(accuracy.scans).toBe(rows.length);
    expect(accuracy.meanDeviationA).toBeCloseTo(mean, 12);
    expect(accuracyText(accuracy)).toMatch(new RegExp(`^Si: [+−]?\\d\\.\\d{5} Å, ${rows.length} scans in 12 months$`));

    // On time: delivered by the due date, of all delivered with a due date in the last 12 months, counted here by hand.
    const orders = await db.select().from(schema.orders).where(eq(schema.orders.labId, labId));
    const since = recordSince().getTime();
    const delivered = orders.filter((o) => o.deliveredAt && o.dueAt && o.deliveredAt.getTime() >= since);
    const onTime = delivered.filter((o) => o.deliveredAt!.getTime() <= o.dueAt!.getTime()).length;
    expect(await onTimeRecord(labId)).toEqual({ onTime, delivered: delivered.length });

    const api = await callRoute(labsApi, getRequest("/api/labs?q=Granite"));
    const lab = (api.body as { labs: { name: string; accuracy: { instrumentName: string; text: string }[]; onTime: { text: string } }[] }).labs[0];
    expect(lab.accuracy.find((a) => a.instrumentName === instrument.name)!.text).toBe(accuracyText(accuracy));
    expect(lab.onTime.text).toBe(onTimeText({ onTime, delivered: delivered.length }));
    // No internal id in the public answer.
    expect(JSON.stringify(lab)).not.toContain(instrument.id);

    const profile = await callRoute(profileLoader, getRequest("/labs/granite-ridge-characterisation"), { slug: "granite-ridge-characterisation" });
    const shown = (profile.body as { lab: { onTime: string; instruments: { name: string; accuracy: string[] }[] } }).lab;
    expect(shown.instruments.find((i) => i.name === instrument.name)!.accuracy).toEqual([accuracyText(accuracy)]);
    expect(shown.onTime).toBe(onTimeText({ onTime, delivered: delivered.length }));
  });
});
