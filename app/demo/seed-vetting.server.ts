// The approved demo labs' vetting evidence: the accreditation certificate, the signed radiation-licence statement and
// a calibration scan of a line-position standard, simulated by the project's own code and checked as the vetting
// screen checks it. A demo lab shown as approved must pass the same rule the admin's approval is held to.
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { LANTHANUM_HEXABORIDE, SILICON } from "~/diffraction/structures";
import { checkCalibrationScan } from "~/domain/calibration-check";
import type { ANODE_CHOICES, MONOCHROMATION_CHOICES } from "~/domain/capabilities";
import { approvalProblem, CALIBRATION_STANDARDS, LICENCE_STATEMENT, signedStatement, withinTolerance, type CalibrationStandard } from "~/domain/vetting";
import { putObject, storageKeyFor } from "~/models/files/storage.server";
import { vettingPrefix } from "~/models/labs/vetting.server";
import { simplePdf } from "./demo-pdf";

export interface DemoVetting {
  /** The lab manager who signs the statement and hands in the files. */
  managerEmail: string;
  standard: CalibrationStandard;
  instrumentName: string;
  anode: (typeof ANODE_CHOICES)[number];
  monochromation: (typeof MONOCHROMATION_CHOICES)[number];
  twoTheta: [number, number];
  step: number;
  /** A small zero error, as a freshly aligned instrument gives (degrees 2θ). */
  zeroShift: number;
  seed: number;
}

const STRUCTURES = { si_srm640c: SILICON, lab6_srm660c: LANTHANUM_HEXABORIDE } as const;
const sha256 = (bytes: Uint8Array) => createHash("sha256").update(bytes).digest("hex");

async function personId(email: string) {
  const [row] = await db.select({ id: schema.users.id, name: schema.users.name }).from(schema.users).where(eq(schema.users.email, email));
  if (!row) throw new Error(`demo: no person ${email}`);
  return row;
}

/**
 * Gives a demo lab its vetting evidence and approves it, unless it has the evidence already (a demo seeded
 * before gains it on the next run). Throws when the simulated check would not pass: the demo must agree with
 * the approval rule of docs/design.md#labs-and-vetting.
 */
export async function vetDemoLab(labId: string, labName: string, accreditationNumber: string, v: DemoVetting) {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, labId));
  // A lab an admin has since rejected or suspended in a running demo is left as it is.
  if (!lab || approvalProblem(lab) === null || !["applied", "approved"].includes(lab.vettingState)) return false;
  const [manager, admin] = await Promise.all([personId(v.managerEmail), personId("admin@diffractory.example")]);
  const prefix = vettingPrefix(labId);
  const certificateName = `accreditation-${accreditationNumber}.pdf`;
  const certificateBytes = simplePdf([
    `Certificate of accreditation ${accreditationNumber} (Diffractory demo, invented)`,
    `${labName}: testing laboratory, X-ray powder diffraction.`,
    "Valid until 30 June 2028.",
  ]);
  const certificateKey = storageKeyFor(prefix, certificateName);
  await putObject(certificateKey, certificateBytes, "application/pdf");

  const standard = CALIBRATION_STANDARDS[v.standard];
  const scanName = `${v.standard}_${v.anode}_${v.twoTheta[0]}-${v.twoTheta[1]}.xy`;
  const text = formatScanAsXy(
    simulatePattern({
      structure: STRUCTURES[v.standard],
      radiation: { kind: "anode", anode: v.anode, monochromation: v.monochromation === "k_alpha1_only" ? "k_alpha1_only" : "k_alpha_doublet" },
      twoThetaMin: v.twoTheta[0],
      twoThetaMax: v.twoTheta[1],
      step: v.step,
      zeroShift: v.zeroShift,
      background: { constant: 100, slope: -0.3 },
      noise: { seed: v.seed },
    }),
    `${standard.label} line-position check, ${v.instrumentName}, Diffractory demo (simulated)`,
  );
  const scanBytes = new TextEncoder().encode(text);
  const scanKey = storageKeyFor(prefix, scanName);
  await putObject(scanKey, scanBytes, "text/plain");
  const outcome = checkCalibrationScan(text, {
    standard: v.standard,
    instrumentName: v.instrumentName,
    anode: v.anode,
    monochromation: v.monochromation,
    fileName: scanName,
  });
  if (!outcome.ok) throw new Error(`demo: ${labName}'s calibration scan could not be checked: ${outcome.error}`);
  if (!withinTolerance(outcome.check)) throw new Error(`demo: ${labName}'s calibration check is outside the approval tolerance`);

  const now = new Date();
  const evidence = {
    licenceAttestation: signedStatement(LICENCE_STATEMENT, manager.name),
    licenceAttestedBy: manager.id,
    licenceAttestedAt: now,
    calibrationStandard: v.standard,
    calibrationCheck: outcome.check as unknown as Record<string, unknown>,
  };
  const problem = approvalProblem(evidence);
  if (problem) throw new Error(`demo: ${labName} would not be approvable: ${problem}`);
  await db.transaction(async (tx) => {
    await tx.insert(schema.labDocuments).values([
      {
        labId,
        kind: "accreditation_certificate",
        uploadedBy: manager.id,
        storageKey: certificateKey,
        fileName: certificateName,
        contentType: "application/pdf",
        sizeBytes: certificateBytes.byteLength,
        sha256: sha256(certificateBytes),
      },
      {
        labId,
        kind: "calibration_scan",
        uploadedBy: manager.id,
        storageKey: scanKey,
        fileName: scanName,
        contentType: "text/plain",
        sizeBytes: scanBytes.byteLength,
        sha256: sha256(scanBytes),
      },
    ]);
    await tx
      .update(schema.labs)
      .set({
        ...evidence,
        vettingState: "approved",
        reviewedBy: admin.id,
        reviewedAt: now,
        reviewNote: `Certificate, signed radiation-licence statement and ${standard.label} scan in order.`,
        updatedAt: now,
      })
      .where(eq(schema.labs.organisationId, labId));
  });
  return true;
}
