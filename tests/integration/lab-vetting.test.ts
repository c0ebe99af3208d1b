// Lab vetting on the real PostgreSQL: the application with a calibration scan, the engine's check, and the admin's decisions.
import { and, eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";
import { vettingPrefix } from "~/models/labs/vetting.server";
import { APPROVAL_TOLERANCE_A, LICENCE_STATEMENT, withinTolerance, type CalibrationCheck } from "~/domain/vetting";
import { action as reviewAction, loader as reviewLoader } from "~/routes/admin/lab-review";
import { loader as queueLoader } from "~/routes/admin/vetting-queue";
import { action as uploadAction } from "~/routes/lab/vetting-upload";
import { action as vettingAction, loader as vettingLoader } from "~/routes/lab/vetting";
import { action as createAccountAction } from "~/routes/public/create-account";
import { putObject } from "~/models/files/storage.server";
import { callRoute, cookieFrom, formRequest, getRequest, sessionCookieFor } from "./route-call";

const PASSWORD = "diffractory-demo";
const ADMIN = "admin@diffractory.example";
const OPERATOR = "operator@graniteridge.example";
const CLIENT = "owner@halvorsen.example";
const LAB_MANAGER = "lab@graniteridge.example";
// NIST SRM 640c certificate value (docs/reference-values.md#certified-lattice-parameters).
const SI_640C_A = 5.4311946;

const cookies: Record<string, string> = {};
async function as(email: string) {
  // The admin's sign-in takes a second-factor code too.
  cookies[email] ??= await sessionCookieFor(email, { password: PASSWORD });
  return cookies[email];
}

/** A new lab signs up; returns its session cookie and id. */
async function newLab(name: string, email: string) {
  const answer = await callRoute(
    createAccountAction,
    formRequest("/create-account", {
      kind: "lab",
      name: "Oona Vasquez-Hart",
      email,
      password: "vetting-test-password",
      organisationName: name,
      city: "Fernhollow",
      country: "Iceland",
    }),
  );
  expect(answer.status).toBe(302);
  cookies[email] = cookieFrom(answer)!;
  const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.name, name));
  return { cookie: cookies[email], labId: org.id };
}

/** A simulated silicon calibration scan on Cu Kα1+Kα2, from the given cell length (Å). */
function siliconScan(a: number, seed: number) {
  const sim = simulatePattern({
    structure: SILICON,
    cell: { a, b: a, c: a, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: 15,
    twoThetaMax: 140,
    step: 0.02,
    background: { constant: 120, slope: -0.3 },
    noise: { seed },
  });
  return formatScanAsXy(sim, "Silicon calibration scan (simulated)");
}

const PDF = "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n";

/** Stores the two files under the lab's vetting prefix, as the browser's direct upload would. */
async function uploadFiles(labId: string, scanText: string, tag: string) {
  const certificateKey = `${vettingPrefix(labId)}/${tag}/accreditation.pdf`;
  const scanKey = `${vettingPrefix(labId)}/${tag}/si-640c.xy`;
  await putObject(certificateKey, PDF, "application/pdf");
  await putObject(scanKey, scanText, "text/plain");
  return { certificateKey, scanKey };
}

function applicationFields(keys: { certificateKey: string; scanKey: string }, extra: Record<string, string> = {}) {
  return {
    description: "Contract powder diffraction for mineral and battery-material producers, two Bragg–Brentano instruments.",
    accreditationNumber: "ISO17025-FH-0042",
    accreditationExpiry: "2028-06-30",
    certificateKey: keys.certificateKey,
    certificateName: "accreditation.pdf",
    scanKey: keys.scanKey,
    scanName: "si-640c.xy",
    attest: "on",
    attestedName: "Oona Vasquez-Hart",
    standard: "si_srm640c",
    instrumentName: "Reflection diffractometer 1",
    anode: "Cu",
    monochromation: "k_alpha_doublet",
    ...extra,
  };
}

async function labRow(labId: string) {
  const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, labId));
  return lab;
}

const review = (labId: string, fields: Record<string, string>, who = ADMIN) =>
  as(who).then((c) => callRoute(reviewAction, formRequest(`/admin/labs/${labId}`, fields, c), { labId }));

let good: { cookie: string; labId: string };
let off: { cookie: string; labId: string };
let incomplete: { cookie: string; labId: string };

beforeAll(async () => {
  await seedDemo();
  good = await newLab("Fernhollow Diffraction Services", "manager@fernhollow.example");
  off = await newLab("Basalt Coast Crystallography", "manager@basaltcoast.example");
  incomplete = await newLab("Tidewater Powder Lab", "manager@tidewater.example");
});

describe("applying for vetting", () => {
  it("creates the lab's row in the applied state when the lab signs up", async () => {
    expect((await labRow(good.labId)).vettingState).toBe("applied");
  });

  it("hands out upload targets under the lab's own prefix and refuses other file types", async () => {
    const body = { intent: "upload-target", purpose: "accreditation_certificate", fileName: "cert.pdf", size: "2048", type: "application/pdf" };
    const ok = await callRoute(uploadAction, formRequest("/lab/vetting/upload", body, good.cookie));
    expect(ok.status).toBe(200);
    expect((ok.body as { target: { storageKey: string } }).target.storageKey.startsWith(`${vettingPrefix(good.labId)}/`)).toBe(true);
    const exe = await callRoute(uploadAction, formRequest("/lab/vetting/upload", { ...body, fileName: "cert.exe" }, good.cookie));
    expect(exe.status).toBe(400);
    expect((exe.body as { error: string }).error).toMatch(/PDF or an image/);
  });

  it("refuses an incomplete application with field errors and changes nothing", async () => {
    const keys = await uploadFiles(good.labId, siliconScan(SI_640C_A, 1), "incomplete");
    const fields: Record<string, string> = applicationFields(keys, { attestedName: "", accreditationExpiry: "2001-01-31" });
    delete fields.attest;
    const answer = await callRoute(vettingAction, formRequest("/lab/vetting", fields, good.cookie));
    expect(answer.status).toBe(400);
    const errors = (answer.body as { result: { error: Record<string, string[]> } }).result.error;
    expect(errors.attest).toEqual(["Confirm the radiation-licence statement."]);
    expect(errors.attestedName).toEqual(["Sign the statement with your full name."]);
    expect(errors.accreditationExpiry).toEqual(["The accreditation has expired; hand in the current certificate."]);
    expect((await labRow(good.labId)).vettingState).toBe("applied");
  });

  it("refuses files stored for another lab and a certificate that is not a PDF or image", async () => {
    const otherKeys = await uploadFiles(off.labId, siliconScan(SI_640C_A, 1), "foreign");
    const foreign = await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(otherKeys), good.cookie));
    expect(foreign.status).toBe(400);
    const keys = await uploadFiles(good.labId, siliconScan(SI_640C_A, 1), "text-as-pdf");
    await putObject(keys.certificateKey, "just some text", "application/pdf");
    const notPdf = await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(keys), good.cookie));
    expect(notPdf.status).toBe(400);
    expect((notPdf.body as { result: { error: Record<string, string[]> } }).result.error.certificateKey[0]).toMatch(/not a PDF or an image/);
    expect((await labRow(good.labId)).vettingState).toBe("applied");
  });

  it("checks a silicon scan simulated from the certified cell and moves the lab to in_review", async () => {
    const keys = await uploadFiles(good.labId, siliconScan(SI_640C_A, 7), "good");
    const answer = await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(keys), good.cookie));
    expect(answer.status).toBe(302);
    const lab = await labRow(good.labId);
    expect(lab.vettingState).toBe("in_review");
    expect(lab.accreditationNumber).toBe("ISO17025-FH-0042");
    expect(lab.licenceAttestation).toContain("Oona Vasquez-Hart");
    expect(lab.licenceAttestedAt).toBeInstanceOf(Date);
    const check = lab.calibrationCheck as unknown as CalibrationCheck;
    // Certified a of NIST SRM 640c (docs/reference-values.md#certified-lattice-parameters); the refined a must recover it within the approval tolerance.
    expect(check.certifiedA).toBe(SI_640C_A);
    expect(Math.abs(check.refinedA! - SI_640C_A)).toBeLessThan(APPROVAL_TOLERANCE_A);
    expect(Math.abs(check.deviationA!)).toBeLessThan(1e-4);
    expect(check.verdict).toBe("consistent");
    expect(check.plot.twoTheta.length).toBe(check.plot.observed.length);
    expect(check.plot.fitted.length).toBe(check.plot.observed.length);
    expect(check.plot.ticks.map((t) => t.label)).toContain("111");
    const docs = await db.select().from(schema.labDocuments).where(eq(schema.labDocuments.labId, good.labId));
    expect(docs.map((d) => d.kind).sort()).toEqual(["accreditation_certificate", "calibration_scan"]);
    expect(docs.every((d) => /^[0-9a-f]{64}$/.test(d.sha256 ?? ""))).toBe(true);
    const [entry] = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.subjectId, good.labId), eq(schema.auditLog.action, "lab_application_submitted")));
    expect(entry.details).toMatchObject({ from: "applied", to: "in_review", verdict: "consistent" });
  });

  it("shows an operator the application but does not let them hand it in", async () => {
    const page = await callRoute(vettingLoader, getRequest("/lab/vetting", await as(OPERATOR)));
    expect(page.status).toBe(200);
    expect(page.body).toMatchObject({ isManager: false, canSubmit: false });
    const keys = await uploadFiles(good.labId, siliconScan(SI_640C_A, 2), "operator");
    const answer = await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(keys), await as(OPERATOR)));
    expect(answer.status).toBe(403);
    const upload = await callRoute(
      uploadAction,
      formRequest("/lab/vetting/upload", { intent: "upload-target", purpose: "calibration_scan", fileName: "s.xy", size: "10", type: "" }, await as(OPERATOR)),
    );
    expect(upload.status).toBe(403);
  });
});

describe("the admin's review", () => {
  it("lists labs in review in the queue", async () => {
    const answer = await callRoute(queueLoader, getRequest("/admin/vetting-queue?state=in_review", await as(ADMIN)));
    expect(answer.status).toBe(200);
    const labs = (answer.body as { labs: { id: string; verdict: string }[] }).labs;
    expect(labs.find((l) => l.id === good.labId)?.verdict).toBe("consistent");
  });

  it("keeps the review from clients and lab staff (403) and answers 404 for a lab that does not exist", async () => {
    expect((await callRoute(reviewLoader, getRequest(`/admin/labs/${good.labId}`, await as(CLIENT)), { labId: good.labId })).status).toBe(403);
    expect((await callRoute(queueLoader, getRequest("/admin/vetting-queue", await as(LAB_MANAGER)))).status).toBe(403);
    expect((await review(good.labId, { intent: "approve", note: "Looks fine to me." }, LAB_MANAGER)).status).toBe(403);
    expect((await review(good.labId, { intent: "approve", note: "Approving my own lab." }, "manager@fernhollow.example")).status).toBe(403);
    expect((await labRow(good.labId)).vettingState).toBe("in_review");
    const missing = "00000000-0000-4000-8000-000000000000";
    expect((await callRoute(reviewLoader, getRequest(`/admin/labs/${missing}`, await as(ADMIN)), { labId: missing })).status).toBe(404);
    expect((await callRoute(reviewLoader, getRequest("/admin/labs/not-a-uuid", await as(ADMIN)), { labId: "not-a-uuid" })).status).toBe(404);
  });

  it("shows the documents with presigned links that expire in minutes", async () => {
    const answer = await callRoute(reviewLoader, getRequest(`/admin/labs/${good.labId}`, await as(ADMIN)), { labId: good.labId });
    expect(answer.status).toBe(200);
    const body = answer.body as { documents: { url: string }[]; withinTolerance: boolean; decisions: string[] };
    expect(body.documents).toHaveLength(2);
    expect(body.documents.every((d) => d.url.includes("X-Amz-Expires=300"))).toBe(true);
    expect(body.withinTolerance).toBe(true);
    expect(body.decisions).toEqual(["approve", "reject"]);
  });

  it("approves a lab whose calibration is within tolerance, then suspends and reinstates it with notes", async () => {
    expect((await review(good.labId, { intent: "approve", note: "" })).status).toBe(400);
    expect((await review(good.labId, { intent: "approve", note: "Certificate and silicon scan in order." })).status).toBe(302);
    expect((await labRow(good.labId)).vettingState).toBe("approved");
    expect((await review(good.labId, { intent: "approve", note: "Approving twice." })).status).toBe(400);
    expect((await review(good.labId, { intent: "suspend", note: "Accreditation lapsed; awaiting renewal." })).status).toBe(302);
    expect((await labRow(good.labId)).vettingState).toBe("suspended");
    expect((await review(good.labId, { intent: "reinstate", note: "Renewed certificate received." })).status).toBe(302);
    const lab = await labRow(good.labId);
    expect(lab.vettingState).toBe("approved");
    expect(lab.reviewNote).toBe("Renewed certificate received.");
    const actions = (await db.select().from(schema.auditLog).where(eq(schema.auditLog.subjectId, good.labId))).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(["lab_approved", "lab_suspended", "lab_reinstated"]));
    expect(actions).not.toContain("lab_approval_override");
  });

  it("does not approve a scan from a 0.3 % wrong cell without an override; rejects it; approves with an override and a reason", async () => {
    // 0.3 % off the NIST SRM 640c cell (docs/reference-values.md#certified-lattice-parameters): Δa ≈ 0.0163 Å, far outside the tolerance.
    const keys = await uploadFiles(off.labId, siliconScan(SI_640C_A * 1.003, 9), "off");
    expect((await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(keys), off.cookie))).status).toBe(302);
    const check = (await labRow(off.labId)).calibrationCheck as unknown as CalibrationCheck;
    expect(check.deviationA!).toBeCloseTo(SI_640C_A * 0.003, 3);
    expect(check.deviationPpm!).toBeCloseTo(3000, -2);

    const refused = await review(off.labId, { intent: "approve", note: "Looks fine." });
    expect(refused.status).toBe(400);
    expect((refused.body as { result: { error: Record<string, string[]> } }).result.error.override[0]).toMatch(/outside the tolerance/);
    const noReason = await review(off.labId, { intent: "approve", note: "Looks fine.", override: "on", overrideReason: "" });
    expect(noReason.status).toBe(400);
    expect((noReason.body as { result: { error: Record<string, string[]> } }).result.error.overrideReason).toBeDefined();
    expect((await labRow(off.labId)).vettingState).toBe("in_review");

    expect((await review(off.labId, { intent: "reject", note: "Silicon cell 0.3 % off; recalibrate the goniometer and send a new scan." })).status).toBe(302);
    expect((await labRow(off.labId)).vettingState).toBe("rejected");

    // The lab hands in again (same scan); the admin approves with a written override.
    const again = await uploadFiles(off.labId, siliconScan(SI_640C_A * 1.003, 10), "again");
    expect((await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(again), off.cookie))).status).toBe(302);
    expect((await labRow(off.labId)).vettingState).toBe("in_review");
    const reason = "The standard was measured at 80 °C on a hot stage; thermal expansion explains the offset.";
    expect(
      (await review(off.labId, { intent: "approve", note: "Approved on the hot-stage explanation.", override: "on", overrideReason: reason })).status,
    ).toBe(302);
    expect((await labRow(off.labId)).vettingState).toBe("approved");
    const [override] = await db
      .select()
      .from(schema.auditLog)
      .where(and(eq(schema.auditLog.subjectId, off.labId), eq(schema.auditLog.action, "lab_approval_override")));
    expect(override.details).toMatchObject({ reason });
    const [admin] = await db.select().from(schema.users).where(eq(schema.users.email, ADMIN));
    expect(override.actorUserId).toBe(admin.id);
  });
});

describe("what an approved lab must have", () => {
  const formErrorsOf = (answer: { body: unknown }) => (answer.body as { result: { error: Record<string, string[]> } }).result.error[""] ?? [];
  const decisionsAbout = async (labId: string) =>
    (await db.select().from(schema.auditLog).where(eq(schema.auditLog.subjectId, labId)))
      .map((e) => e.action)
      .filter((a) => ["lab_approved", "lab_rejected", "lab_approval_override", "lab_reinstated"].includes(a));

  it("refuses to approve without the signed statement or a checked calibration scan, changing nothing, even with an override", async () => {
    const keys = await uploadFiles(incomplete.labId, siliconScan(SI_640C_A, 11), "complete");
    expect((await callRoute(vettingAction, formRequest("/lab/vetting", applicationFields(keys), incomplete.cookie))).status).toBe(302);
    const handedIn = await labRow(incomplete.labId);
    const lettersBefore = (await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, "lab_decided"))).length;
    expect(withinTolerance(handedIn.calibrationCheck as unknown as CalibrationCheck)).toBe(true);

    // An application whose statement is missing (as one handed in before the statement existed would be).
    await db.update(schema.labs).set({ licenceAttestation: null, licenceAttestedAt: null }).where(eq(schema.labs.organisationId, incomplete.labId));
    const page = await callRoute(reviewLoader, getRequest(`/admin/labs/${incomplete.labId}`, await as(ADMIN)), { labId: incomplete.labId });
    expect((page.body as { incomplete: string | null }).incomplete).toMatch(/radiation-licence statement/);
    const noStatement = await review(incomplete.labId, { intent: "approve", note: "Scan in order." });
    expect(noStatement.status).toBe(400);
    expect(formErrorsOf(noStatement)).toEqual([
      "The lab has not signed the radiation-licence statement; it cannot be approved until its application includes it.",
    ]);

    // The statement back, the calibration check missing: refused too, and an override does not help.
    await db
      .update(schema.labs)
      .set({ licenceAttestation: handedIn.licenceAttestation, licenceAttestedAt: handedIn.licenceAttestedAt, calibrationCheck: null })
      .where(eq(schema.labs.organisationId, incomplete.labId));
    const noCheck = await review(incomplete.labId, {
      intent: "approve",
      note: "Scan in order.",
      override: "on",
      overrideReason: "The admin has seen the scan elsewhere and vouches for it.",
    });
    expect(noCheck.status).toBe(400);
    expect(formErrorsOf(noCheck)).toEqual(["The lab's calibration scan has not been checked; it cannot be approved until its application includes one."]);
    const unchanged = await labRow(incomplete.labId);
    expect(unchanged.vettingState).toBe("in_review");
    expect(unchanged.reviewedAt).toBeNull();
    expect(await decisionsAbout(incomplete.labId)).toEqual([]);
    expect(await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, "lab_decided"))).toHaveLength(lettersBefore);

    // Complete again: the approval goes through.
    await db.update(schema.labs).set({ calibrationCheck: handedIn.calibrationCheck }).where(eq(schema.labs.organisationId, incomplete.labId));
    const done = await callRoute(reviewLoader, getRequest(`/admin/labs/${incomplete.labId}`, await as(ADMIN)), { labId: incomplete.labId });
    expect((done.body as { incomplete: string | null }).incomplete).toBeNull();
    expect((await review(incomplete.labId, { intent: "approve", note: "Statement, certificate and silicon scan in order." })).status).toBe(302);
    expect((await labRow(incomplete.labId)).vettingState).toBe("approved");
    expect(await decisionsAbout(incomplete.labId)).toEqual(["lab_approved"]);
  });

  it("gives the demo's approved labs a signed statement and a calibration check within tolerance", async () => {
    const managers = { "Granite Ridge Characterisation": LAB_MANAGER, "Lakeside Institute X-ray Core": "lab@lakeside.example" };
    for (const [name, manager] of Object.entries(managers)) {
      const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.name, name));
      const lab = await labRow(org.id);
      expect(lab.vettingState).toBe("approved");
      const [person] = await db.select().from(schema.users).where(eq(schema.users.email, manager));
      expect(lab.licenceAttestation).toContain(LICENCE_STATEMENT);
      expect(lab.licenceAttestation).toContain(person.name);
      expect(lab.licenceAttestedBy).toBe(person.id);
      const check = lab.calibrationCheck as unknown as CalibrationCheck;
      // The certified cells of NIST SRM 640c and 660c (docs/reference-values.md#certified-lattice-parameters), recovered within the approval tolerance.
      expect(check.certifiedA).toBe(check.standard === "si_srm640c" ? SI_640C_A : 4.156826);
      expect(withinTolerance(check)).toBe(true);
      expect(check.verdict).toBe("consistent");
      const docs = await db.select().from(schema.labDocuments).where(eq(schema.labDocuments.labId, org.id));
      expect(docs.map((d) => d.kind).sort()).toEqual(["accreditation_certificate", "calibration_scan"]);

      const review = await callRoute(reviewLoader, getRequest(`/admin/labs/${org.id}`, await as(ADMIN)), { labId: org.id });
      expect(review.body).toMatchObject({ incomplete: null, withinTolerance: true, lab: { attestedBy: person.name } });
      // The lab's own vetting page states both.
      const own = await callRoute(vettingLoader, getRequest("/lab/vetting", await as(manager)));
      const body = own.body as { state: string; application: { attestation: string | null; scan: string | null }; check: CalibrationCheck | null };
      expect(body.state).toBe("approved");
      expect(body.application.attestation).toContain(person.name);
      expect(body.application.scan).toMatch(/\.xy$/);
      expect(body.check?.deviationA).not.toBeNull();
    }
  });
});
