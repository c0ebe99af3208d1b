// The lab's accuracy on record (docs/design.md#calibration-on-record): repeat calibration scans of a certified
// standard, the instrument's calibration state and schedule, the hourly overdue sweep, and the public figures
// (measured accuracy per instrument, on-time delivery per lab).
import { and, asc, eq, gte, inArray, isNotNull, lt, sql } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import { ANODE_CHOICES } from "~/domain/capabilities";
import { checkCalibrationScan } from "~/domain/calibration-check";
import {
  CALIBRATION_INTERVAL_RANGE,
  judgeCalibration,
  nextDueAt,
  profileWidth,
  RECORD_MONTHS,
  type CalibrationJudgement,
  type CalibrationState,
  type InstrumentAccuracy,
  type OnTimeRecord,
} from "~/domain/calibration-record";
import type { CalibrationStandard } from "~/domain/vetting";
import type { InstrumentCalibration } from "~/db/schema";
import { audit } from "~/models/audit.server";
import { NoSuchRecord } from "~/models/errors";
import { invalidateDirectory } from "~/models/labs/directory.server";
import { notify } from "~/models/notifications/outbox.server";

/** Where an instrument's calibration scans live in storage; submitted keys must sit under it. */
export const calibrationPrefix = (labId: string, instrumentId: string) => `labs/${labId}/calibrations/${instrumentId}`;

export interface CalibrationActor {
  userId: string | null;
  clientAddress?: string;
}

export interface StoredScan {
  storageKey: string;
  sizeBytes: number;
  sha256: string;
}

export type RecordedCalibration =
  | { ok: true; calibration: InstrumentCalibration; judgement: CalibrationJudgement; state: CalibrationState }
  | { ok: false; error: string };

/** The lab's instrument, or undefined when the instrument is not this lab's (or does not exist). */
export async function instrumentOfLab(labId: string, instrumentId: string) {
  const [row] = await db
    .select()
    .from(schema.instruments)
    .where(and(eq(schema.instruments.id, instrumentId), eq(schema.instruments.labId, labId)));
  return row;
}

/**
 * Records one calibration scan of a certified standard on an instrument: the engine's check against the
 * certificate (checkCalibrationScan), the judgement against the tolerance and the instrument's control limits,
 * a row of instrument_calibrations, and the instrument's state and next due date. A scan that fails marks the
 * instrument out of control and tells the admins and the lab; a passing one restores it. `measuredAt` is when the
 * scan was measured (the demo records a year of history with it). Bad scans get one sentence, nothing is stored.
 */
export async function recordCalibration(
  instrumentId: string,
  scan: string | Uint8Array,
  fileName: string,
  standard: CalibrationStandard,
  measuredAt: Date,
  actor: CalibrationActor | null,
  stored?: StoredScan,
): Promise<RecordedCalibration> {
  const [instrument] = await db.select().from(schema.instruments).where(eq(schema.instruments.id, instrumentId));
  if (!instrument) throw new NoSuchRecord("There is no such instrument.");
  const anode = ANODE_CHOICES.find((a) => a === instrument.anode);
  if (!anode) {
    return { ok: false, error: "Calibration scans are checked for X-ray tube instruments; this instrument states a custom wavelength." };
  }
  if (Number.isNaN(measuredAt.getTime()) || measuredAt.getTime() > Date.now() + 86_400_000) {
    return { ok: false, error: "Give the date the calibration scan was measured (not in the future)." };
  }
  const outcome = checkCalibrationScan(scan, {
    standard,
    instrumentName: instrument.name,
    anode,
    monochromation: instrument.monochromation,
    fileName,
  });
  if (!outcome.ok) return { ok: false, error: `The calibration scan could not be checked: ${outcome.error}` };
  const { plot: _plot, wholePattern: _whole, ...check } = outcome.check;
  const profile = outcome.check.instrumentProfile;

  const result = await db.transaction(async (tx) => {
    const [current] = await tx.select().from(schema.instruments).where(eq(schema.instruments.id, instrumentId)).for("update");
    // The series the new point joins: earlier calibrations with the same standard, oldest first.
    const prior = await tx
      .select({
        deviationA: schema.instrumentCalibrations.deviationA,
        passed: schema.instrumentCalibrations.passed,
        measuredAt: schema.instrumentCalibrations.measuredAt,
      })
      .from(schema.instrumentCalibrations)
      .where(
        and(
          eq(schema.instrumentCalibrations.instrumentId, instrumentId),
          eq(schema.instrumentCalibrations.standard, standard),
          lt(schema.instrumentCalibrations.measuredAt, measuredAt),
        ),
      )
      .orderBy(asc(schema.instrumentCalibrations.measuredAt));
    const judgement = judgeCalibration(prior, check.deviationA);
    const [calibration] = await tx
      .insert(schema.instrumentCalibrations)
      .values({
        instrumentId,
        labId: current.labId,
        standard,
        fileName,
        storageKey: stored?.storageKey ?? null,
        sizeBytes: stored?.sizeBytes ?? null,
        sha256: stored?.sha256 ?? null,
        check: check as unknown as Record<string, unknown>,
        deviationA: check.deviationA,
        zeroShift: check.zeroShift,
        cagliotiU: profile?.U ?? null,
        cagliotiV: profile?.V ?? null,
        cagliotiW: profile?.W ?? null,
        passed: judgement.passed,
        rulesBroken: judgement.rulesBroken,
        measuredAt,
        uploadedBy: actor?.userId ?? null,
      })
      .returning();
    // Only the latest calibration decides the state; an older one filled in later changes the record only.
    const [later] = await tx
      .select({ id: schema.instrumentCalibrations.id })
      .from(schema.instrumentCalibrations)
      .where(and(eq(schema.instrumentCalibrations.instrumentId, instrumentId), sql`${schema.instrumentCalibrations.measuredAt} > ${measuredAt.toISOString()}`))
      .limit(1);
    let state = current.calibrationState;
    if (!later) {
      state = judgement.passed ? "ok" : "out_of_control";
      await tx
        .update(schema.instruments)
        .set({
          calibrationState: state,
          calibrationStandard: standard,
          calibrationDueAt: nextDueAt(measuredAt, current.calibrationIntervalDays),
        })
        .where(eq(schema.instruments.id, instrumentId));
      if (!judgement.passed) {
        await notify(tx, { kind: "calibration_lapsed", instrumentId, state: "out_of_control", note: judgement.problems.join(" ") });
      }
    }
    await audit(
      {
        actorUserId: actor?.userId ?? null,
        organisationId: current.labId,
        action: "instrument_calibrated",
        subjectType: "instrument",
        subjectId: instrumentId,
        clientAddress: actor?.clientAddress,
        details: {
          name: current.name,
          standard,
          fileName,
          deviationA: check.deviationA,
          passed: judgement.passed,
          rulesBroken: judgement.rulesBroken,
          from: current.calibrationState,
          to: state,
        },
      },
      tx,
    );
    return { ok: true as const, calibration, judgement, state };
  });
  // The state decides matching and the public accuracy line.
  invalidateDirectory();
  return result;
}

/** Sets how often the lab repeats an instrument's calibration scan; the next due date moves with it. */
export async function setCalibrationInterval(labId: string, instrumentId: string, days: number, actor: CalibrationActor) {
  if (!Number.isInteger(days) || days < CALIBRATION_INTERVAL_RANGE.min || days > CALIBRATION_INTERVAL_RANGE.max) {
    return { ok: false as const, error: `Give the interval in whole days, ${CALIBRATION_INTERVAL_RANGE.min} to ${CALIBRATION_INTERVAL_RANGE.max}.` };
  }
  return db.transaction(async (tx) => {
    const [instrument] = await tx
      .select()
      .from(schema.instruments)
      .where(and(eq(schema.instruments.id, instrumentId), eq(schema.instruments.labId, labId)))
      .for("update");
    if (!instrument) throw new NoSuchRecord("There is no such instrument.");
    const [last] = await tx
      .select({ measuredAt: schema.instrumentCalibrations.measuredAt })
      .from(schema.instrumentCalibrations)
      .where(eq(schema.instrumentCalibrations.instrumentId, instrumentId))
      .orderBy(sql`${schema.instrumentCalibrations.measuredAt} desc`)
      .limit(1);
    await tx
      .update(schema.instruments)
      .set({ calibrationIntervalDays: days, calibrationDueAt: last ? nextDueAt(last.measuredAt, days) : instrument.calibrationDueAt })
      .where(eq(schema.instruments.id, instrumentId));
    await audit(
      {
        actorUserId: actor.userId,
        organisationId: labId,
        action: "instrument_calibration_interval_set",
        subjectType: "instrument",
        subjectId: instrumentId,
        clientAddress: actor.clientAddress,
        details: { name: instrument.name, from: instrument.calibrationIntervalDays, to: days },
      },
      tx,
    );
    return { ok: true as const };
  });
}

/**
 * The hourly sweep: instruments in order whose calibration is past due become overdue (and leave matching);
 * the admins and the lab are told. Returns how many were marked. `only` limits it to some instruments (tests).
 */
export async function markOverdueCalibrations(now = new Date(), only?: string[]): Promise<number> {
  const due = await db
    .select({ id: schema.instruments.id })
    .from(schema.instruments)
    .where(
      and(
        eq(schema.instruments.calibrationState, "ok"),
        isNotNull(schema.instruments.calibrationDueAt),
        lt(schema.instruments.calibrationDueAt, now),
        ...(only ? [inArray(schema.instruments.id, only.length ? only : ["00000000-0000-0000-0000-000000000000"])] : []),
      ),
    );
  let marked = 0;
  for (const { id } of due) {
    const changed = await db.transaction(async (tx: Tx) => {
      const [row] = await tx
        .update(schema.instruments)
        .set({ calibrationState: "overdue" })
        .where(and(eq(schema.instruments.id, id), eq(schema.instruments.calibrationState, "ok"), lt(schema.instruments.calibrationDueAt, now)))
        .returning();
      if (!row) return false;
      await audit(
        {
          actorUserId: null,
          organisationId: row.labId,
          action: "instrument_calibration_overdue",
          subjectType: "instrument",
          subjectId: id,
          details: { name: row.name, dueAt: row.calibrationDueAt?.toISOString() ?? null },
        },
        tx,
      );
      await notify(tx, {
        kind: "calibration_lapsed",
        instrumentId: id,
        state: "overdue",
        note: `The calibration scan was due on ${row.calibrationDueAt?.toISOString().slice(0, 10) ?? "—"}.`,
      });
      return true;
    });
    if (changed) marked++;
  }
  if (marked > 0) invalidateDirectory();
  return marked;
}

/** An instrument's calibrations, oldest first. */
export async function calibrationsOf(instrumentId: string) {
  return db
    .select()
    .from(schema.instrumentCalibrations)
    .where(eq(schema.instrumentCalibrations.instrumentId, instrumentId))
    .orderBy(asc(schema.instrumentCalibrations.measuredAt), asc(schema.instrumentCalibrations.createdAt));
}

/** Start of the public record's window: RECORD_MONTHS months before `now`. */
export function recordSince(now = new Date()) {
  const since = new Date(now);
  since.setUTCMonth(since.getUTCMonth() - RECORD_MONTHS);
  return since;
}

/**
 * Each active instrument's measured accuracy over the last RECORD_MONTHS months: the mean deviation of its
 * calibrations (every scan, passing or not) and their count, per standard used.
 */
export async function instrumentAccuracy(labId: string, now = new Date()): Promise<InstrumentAccuracy[]> {
  const rows = await db
    .select({
      instrumentId: schema.instruments.id,
      instrumentName: schema.instruments.name,
      standard: schema.instrumentCalibrations.standard,
      mean: sql<number | null>`avg(${schema.instrumentCalibrations.deviationA})`,
      scans: sql<number>`count(${schema.instrumentCalibrations.deviationA})::int`,
    })
    .from(schema.instruments)
    .innerJoin(
      schema.instrumentCalibrations,
      and(eq(schema.instrumentCalibrations.instrumentId, schema.instruments.id), gte(schema.instrumentCalibrations.measuredAt, recordSince(now))),
    )
    .where(and(eq(schema.instruments.labId, labId), eq(schema.instruments.active, true)))
    .groupBy(schema.instruments.id, schema.instruments.name, schema.instrumentCalibrations.standard, schema.instruments.createdAt)
    .orderBy(asc(schema.instruments.createdAt), asc(schema.instrumentCalibrations.standard));
  return rows.map((r) => ({ ...r, meanDeviationA: r.mean === null ? null : Number(r.mean), scans: Number(r.scans) }));
}

/** The lab's on-time delivery over the last RECORD_MONTHS months: orders delivered by their due date, of all delivered with one. */
export async function onTimeRecord(labId: string, now = new Date()): Promise<OnTimeRecord> {
  const [row] = await db
    .select({
      onTime: sql<number>`count(*) filter (where ${schema.orders.deliveredAt} <= ${schema.orders.dueAt})::int`,
      delivered: sql<number>`count(*)::int`,
    })
    .from(schema.orders)
    .where(
      and(
        eq(schema.orders.labId, labId),
        isNotNull(schema.orders.deliveredAt),
        isNotNull(schema.orders.dueAt),
        gte(schema.orders.deliveredAt, recordSince(now)),
        lt(schema.orders.deliveredAt, now),
      ),
    );
  return { onTime: Number(row?.onTime ?? 0), delivered: Number(row?.delivered ?? 0) };
}

/** A calibration row as the history screen reads it (no internal ids beyond the row's own key). */
export function calibrationView(c: InstrumentCalibration) {
  return {
    id: c.id,
    measuredAt: c.measuredAt.toISOString(),
    standard: c.standard,
    fileName: c.fileName,
    deviationA: c.deviationA,
    zeroShift: c.zeroShift,
    width: profileWidth(c.cagliotiU, c.cagliotiV, c.cagliotiW),
    passed: c.passed,
    rulesBroken: c.rulesBroken,
  };
}
