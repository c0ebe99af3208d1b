// Delivered files on the real PostgreSQL and the S3 fake: uploads straight to storage and their verification,
// versions, downloads with the access log, share links, instrument-computer tokens and their rate limit.
import { createHash } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, jsonRequest, sessionCookies } from "./route-call";

const ORIGIN = "http://127.0.0.1:3000";

let w: MoneyWorld;
let app: Awaited<ReturnType<typeof loadApp>>;
const as = sessionCookies();

async function loadApp() {
  return {
    uploads: await import("~/routes/lab/order-uploads"),
    upload: await import("~/routes/lab/order-upload"),
    labFiles: await import("~/routes/lab/order-files"),
    tokens: await import("~/routes/lab/api-tokens"),
    v1Start: await import("~/routes/api/v1/order-files"),
    v1Complete: await import("~/routes/api/v1/order-file-complete"),
    apiOrders: await import("~/routes/api/orders"),
    apiFiles: await import("~/routes/api/order-files"),
    dataRoom: await import("~/routes/client/data-room"),
    dataRoomOrder: await import("~/routes/client/data-room-order"),
    download: await import("~/routes/account/file-download"),
    shared: await import("~/routes/public/shared"),
    sharedDownload: await import("~/routes/public/shared-download"),
    files: await import("~/models/files/files.server"),
    apiTokens: await import("~/models/accounts/api-tokens.server"),
    uploader: await import("~/components/order-upload"),
    simulate: await import("~/diffraction/simulate"),
    structures: await import("~/diffraction/structures"),
    boss: await import("~/jobs/queues.server"),
  };
}

const sha256 = (bytes: string | Uint8Array) => createHash("sha256").update(bytes).digest("hex");

/** A paid order of Halvorsen at Granite Ridge with one sample, moved on to measuring by the lab. */
const measuringOrder = () =>
  w.measuringOrder({ label: "LFP lot 7", formula: "LiFePO4", crystalSystem: "orthorhombic", centering: "P", cellA: 10.33, cellB: 6.01, cellC: 4.69 });

function scanText(targetBytes = 0) {
  const sim = app.simulate.simulatePattern({
    structure: app.structures.SILICON,
    cell: { a: 5.431, b: 5.431, c: 5.431, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: 20,
    twoThetaMax: 90,
    step: 0.02,
    background: { constant: 100 },
    noise: { seed: 3 },
  });
  const text = app.simulate.formatScanAsXy(sim, "Simulated test scan");
  if (text.length >= targetBytes) return text;
  const pad = "# instrument log: detector stable, generator 40 kV 40 mA, no interruptions recorded\n";
  return pad.repeat(Math.ceil((targetBytes - text.length) / pad.length)) + text;
}

/** Starts a browser-style upload as the lab manager, PUTs the bytes and completes with the given SHA-256. */
async function labUpload(orderId: string, name: string, body: string | Uint8Array, opts: { sha256?: string; kind?: string; sampleId?: string } = {}) {
  const cookie = await as("lab@graniteridge.example");
  const size = typeof body === "string" ? Buffer.byteLength(body) : body.length;
  const start = await callRoute(
    app.uploads.action,
    jsonRequest(`/lab/orders/${orderId}/uploads`, { name, size, kind: opts.kind ?? "scan", sampleId: opts.sampleId }, { Cookie: cookie }),
    { id: orderId },
  );
  expect(start.status, JSON.stringify(start.body)).toBe(201);
  const started = start.body as { fileId: string; version: number; upload: { url: string; headers: Record<string, string> } };
  const put = await fetch(started.upload.url, { method: "PUT", body: typeof body === "string" ? body : Buffer.from(body), headers: started.upload.headers });
  expect(put.status).toBe(200);
  const complete = await callRoute(
    app.upload.action,
    jsonRequest(`/lab/orders/${orderId}/uploads/${started.fileId}`, { intent: "complete", sha256: opts.sha256 ?? sha256(body) }, { Cookie: cookie }),
    { id: orderId, fileId: started.fileId },
  );
  return { started, complete };
}

async function fileRow(fileId: string) {
  const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, fileId));
  return row;
}

beforeAll(async () => {
  w = await moneyWorld();
  app = await loadApp();
  await w.onboardLab();
});

afterAll(async () => {
  await app?.boss.stopBoss();
  await w?.close();
});

describe("uploads straight to storage", () => {
  it("a checksum mismatch is refused, and nothing counts as delivered", async () => {
    const { orderId } = await measuringOrder();
    const { started, complete } = await labUpload(orderId, "lot7-scan.xy", scanText(), { sha256: "0".repeat(64) });
    expect(complete.status).toBe(422);
    expect((complete.body as { error: string }).error).toMatch(/checksum does not match/);
    const row = await fileRow(started.fileId);
    expect(row.state).toBe("rejected");
    expect(row.rejectReason).toMatch(/checksum/);
    expect(await w.orderState(orderId)).toBe("measuring");
    const [check] = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, started.fileId));
    expect(check).toBeUndefined();
    // The client's data room and API show nothing; a download is refused.
    const owner = await as("owner@halvorsen.example");
    const files = await callRoute(app.apiFiles.loader, getRequest(`/api/orders/${orderId}/files`, owner), { id: orderId });
    expect((files.body as { files: unknown[] }).files).toEqual([]);
    expect((await callRoute(app.download.loader, getRequest(`/files/${started.fileId}/download`, owner), { fileId: started.fileId })).status).toBe(404);
  });

  it("a binary file named .xy is refused by its content", async () => {
    const { orderId } = await measuringOrder();
    const bytes = new Uint8Array(4096).map((_, i) => (i * 37) % 256);
    const { started, complete } = await labUpload(orderId, "disguised.xy", bytes);
    expect(complete.status).toBe(422);
    // Scans are read at the upload, so the refusal is the scan reader's one sentence (binary formats are accepted now).
    expect((complete.body as { error: string }).error).toMatch(/^The file is binary and [^\n]*\.$/);
    expect((await fileRow(started.fileId)).state).toBe("rejected");
  });

  it("refuses names, sizes and order states outside the limits with a sentence", async () => {
    const { orderId } = await measuringOrder();
    const cookie = await as("lab@graniteridge.example");
    const start = (body: unknown, id = orderId) => callRoute(app.uploads.action, jsonRequest(`/lab/orders/${id}/uploads`, body, { Cookie: cookie }), { id });
    expect((await start({ name: "scan.exe", size: 100, kind: "scan" })).body).toEqual({ error: expect.stringMatching(/text scan file/) });
    expect((await start({ name: "report.xy", size: 100, kind: "report" })).body).toEqual({ error: "Upload a PDF report." });
    const big = await start({ name: "huge.xy", size: 3e9, kind: "scan" });
    expect(big.status).toBe(413);
    expect((big.body as { error: string }).error).toMatch(/limit is 2 GB/);
    expect((await start({ name: "x.xy", size: 10, kind: "spectrum" })).status).toBe(400);
    expect((await start({ name: "x.xy", size: "ten" })).body).toEqual({ error: "Give the file's size in bytes, as a whole number." });
    expect((await start({ name: "x.xy", size: 0 })).body).toEqual({ error: "The file is empty." });
    const unpaid = await w.makeOrder();
    const early = await start({ name: "early.xy", size: 10, kind: "scan" }, unpaid);
    expect(early.status).toBe(409);
    expect((early.body as { error: string }).error).toMatch(/Awaiting payment/);
    const notJson = await callRoute(
      app.uploads.action,
      new Request(`${ORIGIN}/lab/orders/${orderId}/uploads`, { method: "POST", body: "{", headers: { Cookie: cookie, Origin: ORIGIN } }),
      { id: orderId },
    );
    expect(notJson.status).toBe(400);
    // A client cannot start uploads at all.
    const client = await callRoute(
      app.uploads.action,
      jsonRequest(`/lab/orders/${orderId}/uploads`, { name: "a.xy", size: 10 }, { Cookie: await as("owner@halvorsen.example") }),
      { id: orderId },
    );
    expect(client.status).toBe(403);
  });

  it("keeps versions: the same name twice is v1 and v2, both downloadable", async () => {
    const { orderId, sampleId } = await measuringOrder();
    const first = scanText();
    const second = `${first}# re-measured after realignment\n`;
    const a = await labUpload(orderId, "lot7.xy", first);
    const b = await labUpload(orderId, "lot7.xy", second);
    expect(a.complete.status).toBe(200);
    expect(b.complete.status).toBe(200);
    expect([a.started.version, b.started.version]).toEqual([1, 2]);
    const rowA = await fileRow(a.started.fileId);
    expect(rowA).toMatchObject({ state: "stored", sampleId, sha256: sha256(first) });
    expect(rowA.storageKey).not.toBe((await fileRow(b.started.fileId)).storageKey);
    // Each stored scan is queued for its check.
    const checks = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, a.started.fileId));
    expect(checks).toHaveLength(1);

    const owner = await as("owner@halvorsen.example");
    for (const [file, text] of [
      [a, first],
      [b, second],
    ] as const) {
      const answer = await callRoute(app.download.loader, getRequest(`/files/${file.started.fileId}/download`, owner), { fileId: file.started.fileId });
      expect(answer.status).toBe(302);
      const location = answer.headers.get("Location")!;
      expect(new URL(location).searchParams.get("X-Amz-Expires")).toBe("300");
      expect(await (await fetch(location)).text()).toBe(text);
    }
    const listed = await callRoute(app.apiFiles.loader, getRequest(`/api/orders/${orderId}/files`, owner), { id: orderId });
    expect((listed.body as { files: { name: string; version: number; sha256: string; check: { status: string } }[] }).files).toEqual([
      expect.objectContaining({ name: "lot7.xy", version: 2, sha256: sha256(second), check: expect.objectContaining({ status: "queued" }) }),
      expect.objectContaining({ name: "lot7.xy", version: 1, sha256: sha256(first) }),
    ]);
    const room = await callRoute(app.dataRoomOrder.loader, getRequest(`/client/data-room/${orderId}`, owner), { orderId });
    const log = (room.body as { accessLog: { fileName: string; person: string }[] }).accessLog;
    expect(log).toHaveLength(2);
    expect(log[0]).toMatchObject({ fileName: "lot7.xy", person: expect.any(String) });

    // Within the retention period the owner's deletion is refused with a sentence (docs/design.md#records-that-hold).
    const early = await callRoute(
      app.dataRoomOrder.action,
      formRequest(`/client/data-room/${orderId}`, { intent: "delete", fileId: a.started.fileId }, owner),
      {
        orderId,
      },
    );
    expect(early.status).toBe(400);
    expect(JSON.stringify(early.body)).toContain("cannot be deleted before");
    expect((await fileRow(a.started.fileId)).deletedAt).toBeNull();
    // Once the period is over (stored six years ago), the owner deletes v1: it leaves the data room, the bytes stay.
    await w.db
      .update(w.schema.orderFiles)
      .set({ storedAt: new Date(Date.now() - 6 * 365.25 * 86_400_000) })
      .where(w.eq(w.schema.orderFiles.id, a.started.fileId));
    const del = await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "delete", fileId: a.started.fileId }, owner), {
      orderId,
    });
    expect(del.status).toBe(302);
    expect((await fileRow(a.started.fileId)).deletedAt).not.toBeNull();
    expect((await callRoute(app.download.loader, getRequest(`/files/${a.started.fileId}/download`, owner), { fileId: a.started.fileId })).status).toBe(404);
    const lab = await callRoute(app.download.loader, getRequest(`/files/${a.started.fileId}/download`, await as("lab@graniteridge.example")), {
      fileId: a.started.fileId,
    });
    expect(lab.status).toBe(302);
    // A member (not an owner) may not delete.
    const member = await callRoute(
      app.dataRoomOrder.action,
      formRequest(`/client/data-room/${orderId}`, { intent: "delete", fileId: b.started.fileId }, await as("member@halvorsen.example")),
      { orderId },
    );
    expect(member.status).toBe(403);
  });

  it("a client of another organisation gets 404 for the order's files, a download and the share-link list", async () => {
    const { orderId } = await measuringOrder();
    const { started } = await labUpload(orderId, "private.xy", scanText());
    const other = await as("owner@pinecrest.example");
    expect((await callRoute(app.apiFiles.loader, getRequest(`/api/orders/${orderId}/files`, other), { id: orderId })).status).toBe(404);
    expect((await callRoute(app.download.loader, getRequest(`/files/${started.fileId}/download`, other), { fileId: started.fileId })).status).toBe(404);
    expect((await callRoute(app.dataRoomOrder.loader, getRequest(`/client/data-room/${orderId}`, other), { orderId })).status).toBe(404);
    expect(
      (
        await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "share", label: "Someone", days: "3" }, other), {
          orderId,
        })
      ).status,
    ).toBe(404);
    const room = await callRoute(app.dataRoom.loader, getRequest("/client/data-room", other));
    expect((room.body as { orders: { id: string }[] }).orders.map((o) => o.id)).not.toContain(orderId);
    // Another lab neither.
    const lakeside = await as("lab@lakeside.example");
    expect((await callRoute(app.labFiles.loader, getRequest(`/lab/orders/${orderId}/files`, lakeside), { id: orderId })).status).toBe(404);
    expect(
      (await callRoute(app.uploads.action, jsonRequest(`/lab/orders/${orderId}/uploads`, { name: "a.xy", size: 10 }, { Cookie: lakeside }), { id: orderId }))
        .status,
    ).toBe(404);
  });

  it("an expired presigned URL fails", async () => {
    const { orderId } = await measuringOrder();
    const { started } = await labUpload(orderId, "short-lived.xy", scanText());
    const file = await fileRow(started.fileId);
    const url = await app.files.downloadUrl(file, { userId: w.owner.id }, 1);
    await new Promise((r) => setTimeout(r, 2100));
    const res = await fetch(url);
    expect(res.status).toBe(403);
    expect(await res.text()).toMatch(/expired/i);
  });

  it("a multipart upload of a ~40 MB scan through presigned parts completes and verifies, retrying a failed part", async () => {
    const { orderId, sampleId } = await measuringOrder();
    const text = scanText(40 * 1024 * 1024);
    const bytes = new TextEncoder().encode(text);
    const cookie = await as("lab@graniteridge.example");
    let failedOnce = false;
    const tries: number[] = [];
    const answer = await app.uploader.uploadFile({
      file: new Blob([bytes]),
      backoffMs: 10,
      start: async () => {
        const res = await callRoute(
          app.uploads.action,
          jsonRequest(`/lab/orders/${orderId}/uploads`, { name: "lot7-long.xy", size: bytes.length, kind: "scan", sampleId }, { Cookie: cookie }),
          { id: orderId },
        );
        expect(res.status).toBe(201);
        return res.body as never;
      },
      put: async (url, body, headers, onSent) => {
        const part = Number(new URL(url).searchParams.get("partNumber"));
        tries.push(part);
        if (part === 2 && !failedOnce) {
          failedOnce = true;
          throw new Error("simulated network drop");
        }
        const res = await fetch(url, { method: "PUT", body: Buffer.from(body), headers });
        if (!res.ok) throw new Error(`storage ${res.status}`);
        onSent(body.length);
        return res.headers.get("etag") ?? "";
      },
      complete: async (fileId, body) =>
        callRoute(app.upload.action, jsonRequest(`/lab/orders/${orderId}/uploads/${fileId}`, { intent: "complete", ...body }, { Cookie: cookie }), {
          id: orderId,
          fileId,
        }),
    });
    expect(answer.status, JSON.stringify(answer.body)).toBe(200);
    expect(tries.filter((p) => p === 2)).toHaveLength(2);
    expect(new Set(tries).size).toBe(Math.ceil(bytes.length / (8 * 1024 * 1024)));
    const row = await fileRow((answer.body as { fileId: string }).fileId);
    expect(row).toMatchObject({ state: "stored", sha256: sha256(bytes), sizeBytes: bytes.length, multipartUploadId: null });
  });

  it("a cancelled upload leaves nothing behind", async () => {
    const { orderId } = await measuringOrder();
    const cookie = await as("lab@graniteridge.example");
    const start = await callRoute(
      app.uploads.action,
      jsonRequest(`/lab/orders/${orderId}/uploads`, { name: "big.xy", size: 20 * 1024 * 1024 }, { Cookie: cookie }),
      { id: orderId },
    );
    const { fileId, upload } = start.body as { fileId: string; upload: { parts: unknown[] } };
    expect(upload.parts).toHaveLength(3);
    const abort = await callRoute(app.upload.action, jsonRequest(`/lab/orders/${orderId}/uploads/${fileId}`, { intent: "abort" }, { Cookie: cookie }), {
      id: orderId,
      fileId,
    });
    expect(abort.status).toBe(200);
    expect(await fileRow(fileId)).toBeUndefined();
  });
});

describe("share links", () => {
  it("work signed out, stop after revoke and after expiry, and every use is logged", async () => {
    const { orderId } = await measuringOrder();
    const { started } = await labUpload(orderId, "for-auditor.xy", scanText());
    const owner = await as("owner@halvorsen.example");
    const bad = await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "share", label: "", days: "500" }, owner), {
      orderId,
    });
    expect(bad.status).toBe(400);
    const create = async (label: string) => {
      const answer = await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "share", label, days: "7" }, owner), {
        orderId,
      });
      expect(answer.status).toBe(200);
      return new URL((answer.body as { shared: { url: string } }).shared.url).pathname.split("/").pop()!;
    };
    const token = await create("Dr. Aino Kettunen, auditor");
    const page = await callRoute(app.shared.loader, getRequest(`/shared/${token}`), { token });
    expect(page.status).toBe(200);
    expect((page.body as { shared: { files: { id: string }[] } }).shared.files.map((f) => f.id)).toEqual([started.fileId]);
    const dl = await callRoute(app.sharedDownload.loader, getRequest(`/shared/${token}/files/${started.fileId}`), { token, fileId: started.fileId });
    expect(dl.status).toBe(302);
    expect((await fetch(dl.headers.get("Location")!)).status).toBe(200);
    const logged = await w.db.select().from(w.schema.fileAccessLog).where(w.eq(w.schema.fileAccessLog.fileId, started.fileId));
    expect(logged).toHaveLength(1);
    expect(logged[0].shareLinkId).not.toBeNull();
    expect(logged[0].userId).toBeNull();

    // Revoked: the page says so (410) and downloads stop.
    const room = await callRoute(app.dataRoomOrder.loader, getRequest(`/client/data-room/${orderId}`, owner), { orderId });
    const [link] = (room.body as { shareLinks: { id: string; status: string }[] }).shareLinks;
    expect(link.status).toBe("active");
    expect(
      (await callRoute(app.dataRoomOrder.action, formRequest(`/client/data-room/${orderId}`, { intent: "revoke", linkId: link.id }, owner), { orderId }))
        .status,
    ).toBe(302);
    expect((await callRoute(app.shared.loader, getRequest(`/shared/${token}`), { token })).status).toBe(410);
    expect((await callRoute(app.sharedDownload.loader, getRequest(`/shared/${token}/files/${started.fileId}`), { token, fileId: started.fileId })).status).toBe(
      410,
    );

    // Expired: the same.
    const second = await create("Quality lead at the customer");
    await w.db
      .update(w.schema.shareLinks)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(w.eq(w.schema.shareLinks.label, "Quality lead at the customer"));
    const expired = await callRoute(app.shared.loader, getRequest(`/shared/${second}`), { token: second });
    expect(expired.status).toBe(410);
    expect((expired.body as { gone: string }).gone).toBe("expired");
    expect(
      (await callRoute(app.sharedDownload.loader, getRequest(`/shared/${second}/files/${started.fileId}`), { token: second, fileId: started.fileId })).status,
    ).toBe(410);
    expect((await callRoute(app.shared.loader, getRequest("/shared/not-a-token"), { token: "not-a-token" })).status).toBe(404);
    const after = await w.db.select().from(w.schema.fileAccessLog).where(w.eq(w.schema.fileAccessLog.fileId, started.fileId));
    expect(after).toHaveLength(1);
  });
});

describe("instrument computers", () => {
  async function createToken(email: string, name: string) {
    const answer = await callRoute(app.tokens.action, formRequest("/lab/api-tokens", { intent: "create", name }, await as(email)));
    expect(answer.status).toBe(200);
    return (answer.body as { created: { token: string } }).created.token;
  }
  const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

  it("uploads with a token, only to the token's lab's orders; a revoked token is refused", async () => {
    const { orderId } = await measuringOrder();
    const token = await createToken("lab@graniteridge.example", "Diffractometer 2 control PC");
    const [row] = await w.db.select().from(w.schema.apiTokens).where(w.eq(w.schema.apiTokens.name, "Diffractometer 2 control PC"));
    expect(row.tokenHash).toBe(sha256(token));
    expect(token.startsWith(row.prefix)).toBe(true);
    // An operator cannot create tokens.
    expect(
      (await callRoute(app.tokens.action, formRequest("/lab/api-tokens", { intent: "create", name: "Mine" }, await as("operator@graniteridge.example"))))
        .status,
    ).toBe(403);

    const text = scanText();
    const start = await callRoute(
      app.v1Start.action,
      jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "auto-001.xye", size: Buffer.byteLength(text), sha256: sha256(text) }, bearer(token)),
      { id: orderId },
    );
    expect(start.status).toBe(201);
    const started = start.body as { fileId: string; upload: { method: string; url: string; headers: Record<string, string> }; completeUrl: string };
    expect(started.upload.method).toBe("PUT");
    expect(started.completeUrl).toBe(`${ORIGIN}/api/v1/orders/${orderId}/files/${started.fileId}/complete`);
    await fetch(started.upload.url, { method: "PUT", body: text, headers: started.upload.headers });
    const done = await callRoute(app.v1Complete.action, new Request(started.completeUrl, { method: "POST", headers: bearer(token) }), {
      id: orderId,
      fileId: started.fileId,
    });
    expect(done.status, JSON.stringify(done.body)).toBe(200);
    expect(await fileRow(started.fileId)).toMatchObject({ state: "stored", uploadedVia: "api" });

    // Another lab's token gets 404 for this order.
    const lakeside = await createToken("lab@lakeside.example", "Cryostat PC");
    expect(
      (await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "x.xy", size: 10 }, bearer(lakeside)), { id: orderId }))
        .status,
    ).toBe(404);
    expect(
      (
        await callRoute(app.v1Complete.action, jsonRequest(`/api/v1/orders/${orderId}/files/${started.fileId}/complete`, {}, bearer(lakeside)), {
          id: orderId,
          fileId: started.fileId,
        })
      ).status,
    ).toBe(404);

    // No token, an unknown token, a revoked token: 401.
    expect((await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, {}), { id: orderId })).status).toBe(401);
    expect((await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, {}, bearer("dfy_nonsense")), { id: orderId })).status).toBe(401);
    const list = await callRoute(app.tokens.loader, getRequest("/lab/api-tokens", await as("lab@graniteridge.example")));
    const listed = (list.body as { tokens: { id: string; name: string; lastUsedAt: string | null }[] }).tokens.find(
      (t) => t.name === "Diffractometer 2 control PC",
    )!;
    expect(listed.lastUsedAt).not.toBeNull();
    expect(
      (await callRoute(app.tokens.action, formRequest("/lab/api-tokens", { intent: "revoke", tokenId: listed.id }, await as("lab@graniteridge.example"))))
        .status,
    ).toBe(302);
    const revoked = await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "late.xy", size: 10 }, bearer(token)), {
      id: orderId,
    });
    expect(revoked.status).toBe(401);
    expect(revoked.body).toEqual({ error: "This API token has been revoked." });
  });

  it("is rate limited per token: 429 with Retry-After", { timeout: 60_000 }, async () => {
    const { orderId } = await measuringOrder();
    const token = await createToken("lab@graniteridge.example", "Busy PC");
    // The window is a fixed minute; start well inside one so all the requests land in the same window.
    const intoMinute = Date.now() % 60_000;
    if (intoMinute > 50_000) await new Promise((r) => setTimeout(r, 60_500 - intoMinute));
    const statuses: number[] = [];
    let last;
    for (let i = 0; i < app.apiTokens.API_TOKEN_RATE_LIMIT.limit + 1; i++) {
      last = await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "bad.exe", size: 10 }, bearer(token)), { id: orderId });
      statuses.push(last.status);
    }
    expect(statuses.slice(0, -1).every((s) => s === 400)).toBe(true);
    expect(last!.status).toBe(429);
    expect(Number(last!.headers.get("Retry-After"))).toBeGreaterThan(0);
    // Another token has its own budget.
    const other = await createToken("lab@graniteridge.example", "Quiet PC");
    expect(
      (await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "bad.exe", size: 10 }, bearer(other)), { id: orderId }))
        .status,
    ).toBe(400);
  });
});

describe("APIs for the client's tools", () => {
  it("lists the active organisation's orders by state, and refuses an unknown state", async () => {
    const { orderId } = await measuringOrder();
    const owner = await as("owner@halvorsen.example");
    const all = await callRoute(app.apiOrders.loader, getRequest("/api/orders?state=measuring", owner));
    expect(all.status).toBe(200);
    const orders = (all.body as { orders: { id: string; state: string; labName: string; requestTitle: string; updatedAt: string }[] }).orders;
    expect(orders.find((o) => o.id === orderId)).toEqual({
      id: orderId,
      // The number people read: Halvorsen's prefix, the year and its sequence (docs/design.md#order-numbers).
      number: expect.stringMatching(/^HCW-\d{4}-\d{4,}$/),
      // No purchase order on this one: the field is there, null (docs/design.md#payments-list).
      purchaseOrderNumber: null,
      state: "measuring",
      labName: "Granite Ridge Characterisation",
      requestTitle: expect.stringMatching(/^Money test/),
      updatedAt: expect.any(String),
    });
    expect(orders.every((o) => o.state === "measuring")).toBe(true);
    const bad = await callRoute(app.apiOrders.loader, getRequest("/api/orders?state=shipped", owner));
    expect(bad.status).toBe(400);
    expect((bad.body as { error: string }).error).toMatch(/Unknown state "shipped"/);
    const other = await callRoute(app.apiOrders.loader, getRequest("/api/orders", await as("owner@pinecrest.example")));
    expect((other.body as { orders: { id: string }[] }).orders.map((o) => o.id)).not.toContain(orderId);
    expect((await callRoute(app.apiOrders.loader, getRequest("/api/orders"))).status).toBe(401);
  });
});
