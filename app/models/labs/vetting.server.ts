// Labs on the marketplace: their profile row, the vetting application and the admin's decisions, each audit-logged.
import { isUuid } from "~/domain/ids";
import { and, asc, desc, eq, inArray } from "drizzle-orm";
import { db, schema, type Tx } from "~/db/client.server";
import type { Lab } from "~/db/schema";
import { notify } from "~/models/notifications/outbox.server";
import { audit } from "~/models/audit.server";
import { invalidateDirectory } from "~/models/labs/directory.server";
import { NoSuchRecord } from "~/models/errors";
import {
  approvalProblem,
  DECISIONS,
  signedStatement,
  SUBMITTABLE_STATES,
  VETTING_STATES,
  withinTolerance,
  type CalibrationCheck,
  type Decision,
  type VettingState,
} from "~/domain/vetting";

export { isUuid };

type Db = typeof db | Tx;

/** Raised when a lab's state no longer allows the step (someone else moved it first, or it never could). */
export class VettingConflict extends Error {}

/** The lab's marketplace row, created on first use (lab organisations made before the row existed have none). */
export async function getOrCreateLab(organisationId: string, tx: Db = db): Promise<Lab> {
  await tx.insert(schema.labs).values({ organisationId }).onConflictDoNothing();
  const [lab] = await tx.select().from(schema.labs).where(eq(schema.labs.organisationId, organisationId));
  return lab;
}

/** The lab's marketplace row as it is now, or undefined when the organisation has none yet. */
export async function findLab(organisationId: string): Promise<Lab | undefined> {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, organisationId));
  return lab;
}

/** Where a lab's vetting files live in storage; submitted keys must sit under it. */
export const vettingPrefix = (labId: string) => `labs/${labId}/vetting`;

export interface StoredFile {
  storageKey: string;
  fileName: string;
  contentType: string;
  sizeBytes: number;
  sha256: string;
}

export interface Application {
  labId: string;
  actorUserId: string;
  clientAddress?: string;
  description: string;
  accreditationNumber: string;
  accreditationExpiry: string;
  attestedName: string;
  attestation: string;
  standard: string;
  certificate: StoredFile;
  scan: StoredFile;
  check: CalibrationCheck;
}

/** Hands in the application: evidence, attestation and calibration check; the lab moves to in_review. */
export async function submitApplication(app: Application) {
  return db.transaction(async (tx) => {
    const [current] = await tx.select().from(schema.labs).where(eq(schema.labs.organisationId, app.labId)).for("update");
    if (!current) throw new NoSuchRecord("There is no such lab.");
    if (!SUBMITTABLE_STATES.includes(current.vettingState)) {
      throw new VettingConflict(`The lab is ${current.vettingState.replace("_", " ")}; its application can no longer be changed.`);
    }
    const now = new Date();
    const [certificate, scan] = await tx
      .insert(schema.labDocuments)
      .values([
        { labId: app.labId, kind: "accreditation_certificate", uploadedBy: app.actorUserId, ...app.certificate },
        { labId: app.labId, kind: "calibration_scan", uploadedBy: app.actorUserId, ...app.scan },
      ])
      .returning();
    await tx
      .update(schema.labs)
      .set({
        description: app.description,
        accreditationNumber: app.accreditationNumber,
        accreditationExpiry: app.accreditationExpiry,
        licenceAttestation: signedStatement(app.attestation, app.attestedName),
        licenceAttestedBy: app.actorUserId,
        licenceAttestedAt: now,
        calibrationStandard: app.standard,
        calibrationCheck: app.check as unknown as Record<string, unknown>,
        vettingState: "in_review",
        updatedAt: now,
      })
      .where(eq(schema.labs.organisationId, app.labId));
    await audit(
      {
        actorUserId: app.actorUserId,
        organisationId: app.labId,
        action: "lab_application_submitted",
        subjectType: "lab",
        subjectId: app.labId,
        clientAddress: app.clientAddress,
        details: {
          from: current.vettingState,
          to: "in_review",
          certificateDocumentId: certificate.id,
          scanDocumentId: scan.id,
          refinedA: app.check.refinedA,
          deviationA: app.check.deviationA,
          verdict: app.check.verdict,
        },
      },
      tx,
    );
    await notify(tx, { kind: "lab_application_received", labId: app.labId });
  });
}

/** Raised when an approval lacks the tolerance or an override reason. */
export class ApprovalRefused extends Error {}

/** Raised when the application lacks what every approved lab has: the signed statement and a checked calibration scan. */
export class ApplicationIncomplete extends Error {}

/**
 * The admin's decision on a lab. Approving (or reinstating) needs the signed radiation-licence statement and a
 * checked calibration scan, whatever the admin says; approval also needs the calibration deviation within
 * tolerance, or an override with a written reason, which gets its own audit row.
 */
export async function decideVetting(input: {
  labId: string;
  decision: Decision;
  note: string;
  actorUserId: string;
  clientAddress?: string;
  overrideReason?: string;
}) {
  const rule = DECISIONS[input.decision];
  const decided = await db.transaction(async (tx) => {
    const [current] = await tx.select().from(schema.labs).where(eq(schema.labs.organisationId, input.labId)).for("update");
    if (!current) throw new NoSuchRecord("There is no such lab.");
    if (!(rule.from as readonly VettingState[]).includes(current.vettingState)) {
      throw new VettingConflict(`A lab that is ${current.vettingState.replace("_", " ")} cannot be given "${input.decision}".`);
    }
    const incomplete = rule.to === "approved" ? approvalProblem(current) : null;
    if (incomplete) throw new ApplicationIncomplete(incomplete);
    const check = current.calibrationCheck as CalibrationCheck | null;
    const override = input.decision === "approve" && !withinTolerance(check);
    if (override && !input.overrideReason) {
      throw new ApprovalRefused("The calibration deviation is outside the tolerance; approving needs the override and a written reason.");
    }
    const now = new Date();
    await tx
      .update(schema.labs)
      .set({ vettingState: rule.to, reviewedBy: input.actorUserId, reviewedAt: now, reviewNote: input.note, updatedAt: now })
      .where(and(eq(schema.labs.organisationId, input.labId), eq(schema.labs.vettingState, current.vettingState)));
    const base = {
      actorUserId: input.actorUserId,
      organisationId: input.labId,
      subjectType: "lab",
      subjectId: input.labId,
      clientAddress: input.clientAddress,
    };
    if (override) {
      await audit(
        {
          ...base,
          action: "lab_approval_override",
          details: { reason: input.overrideReason, deviationA: check?.deviationA ?? null, refinedA: check?.refinedA ?? null },
        },
        tx,
      );
    }
    await audit(
      {
        ...base,
        action: `lab_${rule.to === "approved" && current.vettingState === "suspended" ? "reinstated" : rule.to}`,
        details: { from: current.vettingState, to: rule.to, note: input.note, override },
      },
      tx,
    );
    await notify(tx, { kind: "lab_decided", labId: input.labId, to: rule.to, note: input.note });
    return { from: current.vettingState, to: rule.to, override };
  });
  // Approval, suspension and reinstatement change who the public directory lists.
  invalidateDirectory();
  return decided;
}

/** Every lab with its organisation, for the vetting queue; in_review first, then by last change. */
export async function listLabsForVetting(states: readonly VettingState[] = VETTING_STATES) {
  const rows = await db
    .select({
      id: schema.labs.organisationId,
      name: schema.organisations.name,
      city: schema.organisations.city,
      country: schema.organisations.country,
      state: schema.labs.vettingState,
      updatedAt: schema.labs.updatedAt,
      check: schema.labs.calibrationCheck,
    })
    .from(schema.labs)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.labs.organisationId))
    .where(inArray(schema.labs.vettingState, [...states]))
    .orderBy(desc(schema.labs.updatedAt));
  return rows.map((r) => {
    const check = r.check as CalibrationCheck | null;
    return {
      id: r.id,
      name: r.name,
      city: r.city,
      country: r.country,
      state: r.state,
      updatedAt: r.updatedAt.toISOString(),
      verdict: check?.verdict ?? null,
      deviationA: check?.deviationA ?? null,
    };
  });
}

/** A lab with its organisation and vetting documents, for the admin's review; null when there is none. */
export async function labForReview(labId: string) {
  if (!isUuid(labId)) return null;
  const [row] = await db
    .select({ lab: schema.labs, organisation: schema.organisations, attestedBy: schema.users.name })
    .from(schema.labs)
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.labs.organisationId))
    .leftJoin(schema.users, eq(schema.users.id, schema.labs.licenceAttestedBy))
    .where(eq(schema.labs.organisationId, labId));
  if (!row) return null;
  const documents = await db.select().from(schema.labDocuments).where(eq(schema.labDocuments.labId, labId)).orderBy(asc(schema.labDocuments.uploadedAt));
  return { ...row, documents };
}

/** The latest document of each kind a lab has handed in. */
export async function latestDocuments(labId: string) {
  const docs = await db.select().from(schema.labDocuments).where(eq(schema.labDocuments.labId, labId)).orderBy(desc(schema.labDocuments.uploadedAt));
  const latest = new Map<string, (typeof docs)[number]>();
  for (const d of docs) if (!latest.has(d.kind)) latest.set(d.kind, d);
  return latest;
}
