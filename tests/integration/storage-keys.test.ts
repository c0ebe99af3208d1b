// Storage keys, file names and share links at their edges: a key a form sends back must lie under its owner's
// folder segment by segment (no `../` into another organisation's files), a file's name reaches the download
// header safely, and one order holds a bounded number of live share links, even when they are made at once.
import { createHash, randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SHARE_LINK_MAX_LIVE } from "~/domain/order-files";
import { SAMPLE_FIELDS } from "./form-fixtures";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, jsonRequest, sessionCookies, type RouteAnswer } from "./route-call";

const CLIENT = "owner@halvorsen.example";
const LAB = "lab@graniteridge.example";
const PDF = "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n";

let w: MoneyWorld;
let app: Awaited<ReturnType<typeof loadApp>>;
const as = sessionCookies();

async function loadApp() {
  return {
    samples: await import("~/routes/client/request-samples"),
    hazards: await import("~/routes/client/request-hazards"),
    sdsUpload: await import("~/routes/client/request-sds-upload"),
    uploads: await import("~/routes/lab/order-uploads"),
    upload: await import("~/routes/lab/order-upload"),
    download: await import("~/routes/account/file-download"),
    dataRoomOrder: await import("~/routes/client/data-room-order"),
    storage: await import("~/models/files/storage.server"),
    requests: await import("~/models/requests/requests.server"),
    shareLinks: await import("~/models/files/share-links.server"),
    simulate: await import("~/diffraction/simulate"),
    structures: await import("~/diffraction/structures"),
    boss: await import("~/jobs/queues.server"),
  };
}

const sha256 = (bytes: string | Uint8Array) => createHash("sha256").update(bytes).digest("hex");
const fieldErrors = (answer: RouteAnswer) => ((answer.body as { result: { error?: Record<string, string[]> } }).result.error ?? {}) as Record<string, string[]>;
const formErrors = (answer: RouteAnswer) => fieldErrors(answer)[""] ?? [];

/** A paid order of Halvorsen at Granite Ridge with one sample, moved on to measuring by the lab. */
const measuringOrder = () =>
  w.measuringOrder({ label: "Si standard", formula: "Si", crystalSystem: "cubic", centering: "F", cellA: 5.431, cellB: 5.431, cellC: 5.431 });

function siliconScan() {
  const sim = app.simulate.simulatePattern({
    structure: app.structures.SILICON,
    cell: { a: 5.431, b: 5.431, c: 5.431, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: 20,
    twoThetaMax: 90,
    step: 0.02,
    background: { constant: 100 },
    noise: { seed: 5 },
  });
  return app.simulate.formatScanAsXy(sim, "Simulated test scan");
}

beforeAll(async () => {
  w = await moneyWorld();
  app = await loadApp();
});

afterAll(async () => {
  await app?.boss.stopBoss();
  await w?.close();
});

describe("a storage key sent back by a form", () => {
  it("only the request's own folder, segment by segment: a key that climbs out with ../ (or hides a dot, doubled slash or backslash) is refused", async () => {
    const client = await as(CLIENT);
    const draft = await callRoute(
      app.samples.action,
      formRequest("/client/requests/new", { title: "Sheet check", technique: "powder_reflection", ...SAMPLE_FIELDS }, client),
    );
    expect(draft.status).toBe(302);
    const requestId = draft.headers.get("location")!.split("/")[3];
    const [sample] = await w.db.select().from(w.schema.samples).where(w.eq(w.schema.samples.requestId, requestId));
    const ours = app.requests.sdsPrefix({ id: requestId, organisationId: w.halvorsen.id });
    const save = (key: string) =>
      callRoute(
        app.hazards.action,
        formRequest(
          `/client/requests/${requestId}/edit/hazards`,
          {
            "samples[0].id": sample.id,
            "samples[0].afterMeasurement": "return",
            "samples[0].ghs": "GHS07",
            "samples[0].sdsStorageKey": key,
            "samples[0].sdsFileName": "sheet.pdf",
            "samples[0].sdsSha256": sha256(PDF),
          },
          client,
        ),
        { id: requestId },
      );

    // Another organisation's data sheet, where the app's own upload put it.
    const theirs = `requests/${w.granite.id}/${randomUUID()}/sds/${randomUUID()}/their-sheet.pdf`;
    await app.storage.putObject(theirs, PDF, "application/pdf");
    const rest = theirs.slice("requests/".length);
    for (const key of [
      `${ours}/../../../${rest}`,
      `${ours}/./../../../${rest}`,
      `${ours}//../../../${rest}`,
      `${ours}/..\\..\\..\\${rest}`,
      `${ours}/${randomUUID()}/sheet.pdf/..`,
      `${ours}/${randomUUID()}/sheet\r\n.pdf`,
      `${ours}/`,
      `${ours}-elsewhere/${randomUUID()}/sheet.pdf`,
    ]) {
      const answer = await save(key);
      expect(answer.status, key).toBe(400);
      expect(fieldErrors(answer)["samples[0].sds"], key).toEqual(["Upload the safety data sheet on this page."]);
      expect((await w.db.select().from(w.schema.samples).where(w.eq(w.schema.samples.id, sample.id)))[0].sdsStorageKey).toBeNull();
    }

    // The key the upload step hands out is taken.
    const target = await callRoute(
      app.sdsUpload.action,
      formRequest(
        `/client/requests/${requestId}/sds-upload`,
        { intent: "upload-target", fileName: "sheet.pdf", size: String(PDF.length), type: "application/pdf" },
        client,
      ),
      { id: requestId },
    );
    const { uploadUrl, storageKey } = (target.body as { target: { uploadUrl: string; storageKey: string } }).target;
    expect((await fetch(uploadUrl, { method: "PUT", body: PDF, headers: { "Content-Type": "application/pdf" } })).status).toBe(200);
    expect((await save(storageKey)).status).toBe(302);
    expect((await w.db.select().from(w.schema.samples).where(w.eq(w.schema.samples.id, sample.id)))[0].sdsStorageKey).toBe(storageKey);
  });
});

describe("a delivered file's name", () => {
  it("names with quotes and letters beyond ASCII download under their own name, in a header that stays one line", async () => {
    const { orderId, sampleId } = await measuringOrder();
    const lab = await as(LAB);
    const name = 'Intensität "Si" 結晶.xy';
    const body = siliconScan();
    const start = await callRoute(
      app.uploads.action,
      jsonRequest(`/lab/orders/${orderId}/uploads`, { name, size: Buffer.byteLength(body), kind: "scan", sampleId }, { Cookie: lab }),
      {
        id: orderId,
      },
    );
    expect(start.status, JSON.stringify(start.body)).toBe(201);
    const started = start.body as { fileId: string; upload: { url: string; headers: Record<string, string> } };
    expect((await fetch(started.upload.url, { method: "PUT", body, headers: started.upload.headers })).status).toBe(200);
    const done = await callRoute(
      app.upload.action,
      jsonRequest(`/lab/orders/${orderId}/uploads/${started.fileId}`, { intent: "complete", sha256: sha256(body) }, { Cookie: lab }),
      { id: orderId, fileId: started.fileId },
    );
    expect(done.status, JSON.stringify(done.body)).toBe(200);

    const fetchDownload = async () => {
      const redirect = await callRoute(app.download.loader, getRequest(`/files/${started.fileId}/download`, await as(CLIENT)), { fileId: started.fileId });
      expect(redirect.status).toBe(302);
      return fetch(redirect.headers.get("location")!);
    };
    const res = await fetchDownload();
    expect(res.status).toBe(200);
    expect(await res.text()).toBe(body);
    const disposition = res.headers.get("content-disposition")!;
    expect(disposition).toMatch(/^attachment; filename="[\x20-\x7e]+"; filename\*=UTF-8''/);
    expect(decodeURIComponent(disposition.split("filename*=UTF-8''")[1])).toBe(name);

    // A name stored before names were checked, with CR/LF in it, still downloads: the line break does not reach the header.
    await w.db.update(w.schema.orderFiles).set({ name: "old\r\nX-Injected: yes.xy" }).where(w.eq(w.schema.orderFiles.id, started.fileId));
    const old = await fetchDownload();
    expect(old.status).toBe(200);
    expect(old.headers.get("x-injected")).toBeNull();
    expect(old.headers.get("content-disposition")).not.toMatch(/[\r\n]/);
  });
});

describe("share links", () => {
  it(`one order holds at most ${SHARE_LINK_MAX_LIVE} live links, even when made at once; expired and revoked links do not count`, async () => {
    const orderId = await w.makeOrder();
    const owner = await as(CLIENT);
    const share = (label: string) =>
      callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "share", label, days: "7" }, owner), { orderId });
    const base = { orderId, organisationId: w.halvorsen.id, userId: w.owner.id };
    await app.shareLinks.createShareLink({ ...base, label: "Expired reader", expiresAt: new Date(Date.now() - 1000) });
    const { link: revoked } = await app.shareLinks.createShareLink({ ...base, label: "Revoked reader", expiresAt: new Date(Date.now() + 86_400_000) });
    expect(await app.shareLinks.revokeShareLink(orderId, revoked.id)).toBe(true);

    const answers = await Promise.all(Array.from({ length: SHARE_LINK_MAX_LIVE + 5 }, (_, i) => share(`Reader ${i + 1}`)));
    expect(answers.filter((a) => a.status === 200)).toHaveLength(SHARE_LINK_MAX_LIVE);
    const refused = answers.filter((a) => a.status !== 200);
    expect(refused).toHaveLength(5);
    for (const a of refused) {
      expect(a.status).toBe(400);
      expect(formErrors(a).join(" ")).toMatch(new RegExp(`at most ${SHARE_LINK_MAX_LIVE} live share links`));
    }
    const live = (await app.shareLinks.listShareLinks(orderId)).filter((l) => l.status === "active");
    expect(live).toHaveLength(SHARE_LINK_MAX_LIVE);

    // Revoking one frees its place.
    const revoke = await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "revoke", linkId: live[0].id }, owner), {
      orderId,
    });
    expect(revoke.status).toBe(302);
    expect((await share("Reader after a revoke")).status).toBe(200);
    expect((await share("One too many again")).status).toBe(400);
  });
});
