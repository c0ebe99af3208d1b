// A lab's capabilities and prices in the database: instruments, sample stages, hazard acceptance and the price list.
import { and, asc, eq, inArray } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { audit } from "~/models/audit.server";
import { invalidateDirectory } from "~/models/labs/directory.server";
import { NoSuchRecord } from "~/models/errors";
import { profileFailsAt, type InstrumentInput, type StageInput } from "~/domain/capabilities";
import { CALIBRATION_STANDARDS, type CalibrationCheck } from "~/domain/vetting";
import { type PriceListInput, tiersFromInput } from "~/domain/price-list";

export interface Actor {
  userId: string;
  clientAddress?: string;
}

/** Every change here is audited, and changes what the public directory shows, so its cache is cleared. */
const record = (labId: string, actor: Actor, action: string, subjectType: string, subjectId: string, details: Record<string, unknown> = {}) => {
  invalidateDirectory();
  return audit({ actorUserId: actor.userId, organisationId: labId, action, subjectType, subjectId, clientAddress: actor.clientAddress, details });
};

/** The sample stages of the given instruments, coolest first. */
export async function stagesOf(instrumentIds: string[]) {
  if (instrumentIds.length === 0) return [];
  return db
    .select()
    .from(schema.sampleStages)
    .where(inArray(schema.sampleStages.instrumentId, instrumentIds))
    .orderBy(asc(schema.sampleStages.minTemperatureK));
}

/** The lab's instruments, oldest first, each with its sample stages. */
export async function listInstruments(labId: string) {
  const instruments = await db.select().from(schema.instruments).where(eq(schema.instruments.labId, labId)).orderBy(asc(schema.instruments.createdAt));
  const stages = await stagesOf(instruments.map((i) => i.id));
  return instruments.map((i) => ({ ...i, stages: stages.filter((s) => s.instrumentId === i.id) }));
}

/** Where U, V, W typed into the instrument form came from, in words. */
export const PROFILE_ENTERED = "Entered by the lab";

/** Adds an instrument, or updates one of this lab's; another lab's id raises NoSuchRecord. */
export async function saveInstrument(labId: string, input: InstrumentInput, actor: Actor) {
  const hasProfile = input.cagliotiU !== undefined && input.cagliotiV !== undefined && input.cagliotiW !== undefined;
  const profile = hasProfile
    ? { cagliotiU: input.cagliotiU!, cagliotiV: input.cagliotiV!, cagliotiW: input.cagliotiW! }
    : { cagliotiU: null, cagliotiV: null, cagliotiW: null };
  // Values saved unchanged keep where they came from (a fit to the calibration scan stays named as such).
  let profileSource: string | null = hasProfile ? PROFILE_ENTERED : null;
  if (hasProfile && input.id) {
    const [current] = await db
      .select()
      .from(schema.instruments)
      .where(and(eq(schema.instruments.id, input.id), eq(schema.instruments.labId, labId)));
    if (current && current.cagliotiU === profile.cagliotiU && current.cagliotiV === profile.cagliotiV && current.cagliotiW === profile.cagliotiW) {
      profileSource = current.profileSource ?? PROFILE_ENTERED;
    }
  }
  const values = {
    name: input.name,
    technique: input.technique,
    anode: input.sourceKind === "anode" ? input.anode! : null,
    customWavelength: input.sourceKind === "custom" ? input.customWavelength! : null,
    monochromation: input.monochromation,
    twoThetaMin: input.twoThetaMin,
    twoThetaMax: input.twoThetaMax,
    smallestStep: input.smallestStep,
    detector: input.detector,
    energyDiscrimination: input.energyDiscrimination,
    sampleForms: input.sampleForms,
    sampleHolder: input.sampleHolder && input.sampleHolder !== "none" ? input.sampleHolder : null,
    ...profile,
    profileSource,
  };
  let id = input.id;
  if (id) {
    const updated = await db
      .update(schema.instruments)
      .set(values)
      .where(and(eq(schema.instruments.id, id), eq(schema.instruments.labId, labId)))
      .returning({ id: schema.instruments.id });
    if (updated.length === 0) throw new NoSuchRecord("This lab has no such instrument.");
  } else {
    [{ id }] = await db
      .insert(schema.instruments)
      .values({ labId, ...values })
      .returning({ id: schema.instruments.id });
  }
  await record(labId, actor, input.id ? "instrument_updated" : "instrument_added", "instrument", id!, { name: input.name });
  return id!;
}

/**
 * Saves Caglioti U, V, W fitted to a calibration scan on one of this lab's instruments, naming where they came
 * from; another lab's instrument raises NoSuchRecord.
 */
export async function saveInstrumentProfile(labId: string, instrumentId: string, profile: { U: number; V: number; W: number; source: string }, actor: Actor) {
  const updated = await db
    .update(schema.instruments)
    .set({ cagliotiU: profile.U, cagliotiV: profile.V, cagliotiW: profile.W, profileSource: profile.source })
    .where(and(eq(schema.instruments.id, instrumentId), eq(schema.instruments.labId, labId)))
    .returning({ id: schema.instruments.id, name: schema.instruments.name });
  if (updated.length === 0) throw new NoSuchRecord("This lab has no such instrument.");
  await record(labId, actor, "instrument_profile_saved", "instrument", instrumentId, {
    name: updated[0].name,
    U: profile.U,
    V: profile.V,
    W: profile.W,
    source: profile.source,
  });
  return updated[0];
}

/** Raised when a calibration fit cannot be saved on an instrument; the message is the sentence for the lab. */
export class ProfileNotSaved extends Error {}

/**
 * Saves the U, V, W fitted to the lab's vetting calibration scan on one of its instruments (the numbers come from
 * the stored calibration check, never from the form). Refused in one sentence when there is no fit, or when the
 * fit gives no real width over the instrument's 2θ range.
 */
export async function saveCalibrationProfile(labId: string, instrumentId: string, actor: Actor) {
  const [lab] = await db.select({ check: schema.labs.calibrationCheck }).from(schema.labs).where(eq(schema.labs.organisationId, labId));
  const check = lab?.check as CalibrationCheck | null | undefined;
  const fit = check?.instrumentProfile;
  if (!check || !fit) throw new ProfileNotSaved("The calibration scan gave no instrument profile to save; hand in a calibration scan first.");
  const [instrument] = await db
    .select()
    .from(schema.instruments)
    .where(and(eq(schema.instruments.id, instrumentId), eq(schema.instruments.labId, labId)));
  if (!instrument) throw new NoSuchRecord("This lab has no such instrument.");
  const failsAt = profileFailsAt(fit, instrument.twoThetaMin, instrument.twoThetaMax);
  if (failsAt !== null) {
    throw new ProfileNotSaved(
      `The fitted profile gives no real peak width at ${+failsAt.toFixed(1)}° 2θ, inside ${instrument.name}'s range; measure the calibration scan over the instrument's range and hand it in again.`,
    );
  }
  const source = `Fitted to the calibration scan ${check.scanFileName} (${CALIBRATION_STANDARDS[check.standard]?.label ?? check.standard}), ${check.checkedAt.slice(0, 10)}`;
  return saveInstrumentProfile(labId, instrumentId, { U: fit.U, V: fit.V, W: fit.W, source }, actor);
}

export async function removeInstrument(labId: string, id: string, actor: Actor) {
  const removed = await db
    .delete(schema.instruments)
    .where(and(eq(schema.instruments.id, id), eq(schema.instruments.labId, labId)))
    .returning({ name: schema.instruments.name });
  if (removed.length === 0) throw new NoSuchRecord("This lab has no such instrument.");
  await record(labId, actor, "instrument_removed", "instrument", id, { name: removed[0].name });
}

async function requireOwnInstrument(labId: string, instrumentId: string) {
  const [row] = await db
    .select({ id: schema.instruments.id })
    .from(schema.instruments)
    .where(and(eq(schema.instruments.id, instrumentId), eq(schema.instruments.labId, labId)));
  if (!row) throw new NoSuchRecord("This lab has no such instrument.");
}

async function requireOwnStage(labId: string, stageId: string) {
  const [row] = await db
    .select({ id: schema.sampleStages.id })
    .from(schema.sampleStages)
    .innerJoin(schema.instruments, eq(schema.instruments.id, schema.sampleStages.instrumentId))
    .where(and(eq(schema.sampleStages.id, stageId), eq(schema.instruments.labId, labId)));
  if (!row) throw new NoSuchRecord("This lab has no such sample stage.");
}

/** Adds a stage to one of this lab's instruments, or updates one of its stages. */
export async function saveStage(labId: string, input: StageInput, actor: Actor) {
  await requireOwnInstrument(labId, input.instrumentId);
  const values = {
    instrumentId: input.instrumentId,
    name: input.name,
    minTemperatureK: input.minTemperatureK,
    maxTemperatureK: input.maxTemperatureK,
    atmospheres: input.atmospheres,
  };
  let id = input.id;
  if (id) {
    await requireOwnStage(labId, id);
    await db.update(schema.sampleStages).set(values).where(eq(schema.sampleStages.id, id));
  } else {
    [{ id }] = await db.insert(schema.sampleStages).values(values).returning({ id: schema.sampleStages.id });
  }
  await record(labId, actor, input.id ? "stage_updated" : "stage_added", "sample_stage", id!, { name: input.name });
  return id!;
}

export async function removeStage(labId: string, id: string, actor: Actor) {
  await requireOwnStage(labId, id);
  await db.delete(schema.sampleStages).where(eq(schema.sampleStages.id, id));
  await record(labId, actor, "stage_removed", "sample_stage", id);
}

export async function getHazardAcceptance(labId: string) {
  const [row] = await db.select().from(schema.hazardAcceptance).where(eq(schema.hazardAcceptance.labId, labId));
  return { pictograms: row?.pictograms ?? [], specialCategories: row?.specialCategories ?? [] };
}

export async function saveHazardAcceptance(labId: string, input: { pictograms: string[]; specialCategories: string[] }, actor: Actor) {
  const values = { pictograms: input.pictograms, specialCategories: input.specialCategories, updatedAt: new Date() };
  await db
    .insert(schema.hazardAcceptance)
    .values({ labId, ...values })
    .onConflictDoUpdate({ target: schema.hazardAcceptance.labId, set: values });
  await record(labId, actor, "hazard_acceptance_saved", "lab", labId, values);
}

export async function getPriceList(labId: string) {
  const [row] = await db.select().from(schema.priceLists).where(eq(schema.priceLists.labId, labId));
  return row ?? null;
}

export async function savePriceList(labId: string, input: PriceListInput, actor: Actor) {
  const perSampleMinor = Object.fromEntries(Object.entries(input.perSample).filter(([, v]) => v !== undefined)) as Record<string, number>;
  const values = {
    currency: input.currency,
    perSampleMinor,
    perExtraTemperaturePointMinor: input.perExtraTemperaturePoint,
    perInstrumentHourMinor: input.perInstrumentHour,
    samplePreparationMinor: input.samplePreparation,
    hazardousHandlingMinor: input.hazardousHandling,
    rushMultiplier: input.rushMultiplier.toFixed(2),
    turnaroundDays: input.turnaroundDays,
    tiers: tiersFromInput(input.tiers),
    updatedAt: new Date(),
  };
  await db
    .insert(schema.priceLists)
    .values({ labId, ...values })
    .onConflictDoUpdate({ target: schema.priceLists.labId, set: values });
  await record(labId, actor, "price_list_saved", "lab", labId, { currency: input.currency, perSampleMinor, tiers: Object.keys(values.tiers) });
}
