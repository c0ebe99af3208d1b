// Milestone e-mail through the outbox: right recipients only, none lost in an outage, none doubled, nothing from a rollback, SMTP too.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import net, { type AddressInfo } from "node:net";
import { simpleParser, type ParsedMail } from "mailparser";
import { SMTPServer } from "smtp-server";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startMailFake } from "../../services/mail-fake";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest } from "./route-call";

// A mail fake of this file's own on a free port, and short retry delays: every second, no backoff, many tries.
async function freePort() {
  const probe = net.createServer();
  await new Promise<void>((r) => probe.listen(0, "127.0.0.1", r));
  const { port } = probe.address() as AddressInfo;
  await new Promise<void>((r) => probe.close(() => r()));
  return port;
}
const mailDir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-mail-"));
const fakePort = await freePort();
const fake = await startMailFake({ port: fakePort, apiKey: "re_test_notifications", file: path.join(mailDir, "messages.json") });
const mailBase = `http://127.0.0.1:${fakePort}`;

let w: MoneyWorld;
let outbox: typeof import("~/models/notifications/outbox.server");
let sending: typeof import("~/models/notifications/delivery.server");
let worker: typeof import("~/jobs/worker.server");
let boss: typeof import("~/jobs/queues.server");
let models: {
  quotes: typeof import("~/models/requests/quotes.server");
  matching: typeof import("~/models/labs/matching.server");
  session: typeof import("~/utils/session.server");
};
let stopMail: (() => Promise<void>) | null = null;
let clientEmails: string[] = [];
let labEmails: string[] = [];

type Row = {
  id: string;
  kind: string;
  to: string;
  status: string;
  orderId: string | null;
  text: string;
  html: string;
  subject: string;
  attempts: number;
  lastError: string | null;
};

async function rows(where: { orderId?: string; kind?: string } = {}): Promise<Row[]> {
  const { schema, db } = w;
  const { and, eq } = await import("drizzle-orm");
  const conds = [
    where.orderId ? eq(schema.outboxMessages.orderId, where.orderId) : undefined,
    where.kind ? eq(schema.outboxMessages.kind, where.kind) : undefined,
  ].filter(Boolean);
  return db
    .select()
    .from(schema.outboxMessages)
    .where(conds.length ? and(...(conds as never[])) : undefined) as Promise<Row[]>;
}

async function fakeListing(): Promise<{ messages: { idempotencyKey: string | null; to: string[]; subject: string; text?: string }[]; sendAttempts: number }> {
  return (await fetch(`${mailBase}/_fake/messages`)).json();
}

/**
 * The people of an organisation who hear of its milestones (docs/design.md, "Who is told"): its owners and
 * managers. The fixtures' requests and quotes are written by one of them or by nobody, so nobody else is added.
 */
async function decidersOf(orgId: string) {
  const { schema, db, eq } = w;
  const { and, inArray } = await import("drizzle-orm");
  const people = await db
    .select({ email: schema.users.email })
    .from(schema.memberships)
    .innerJoin(schema.users, eq(schema.users.id, schema.memberships.userId))
    .where(and(eq(schema.memberships.organisationId, orgId), inArray(schema.memberships.role, ["owner", "manager"])));
  return people.map((p) => p.email).sort();
}

async function waitFor(check: () => Promise<boolean>, timeoutMs: number, stepMs = 100) {
  const start = Date.now();
  while (Date.now() - start < timeoutMs) {
    if (await check()) return Date.now() - start;
    await new Promise((r) => setTimeout(r, stepMs));
  }
  throw new Error(`Condition not met within ${timeoutMs} ms`);
}

beforeAll(async () => {
  process.env.RESEND_BASE_URL = mailBase;
  process.env.RESEND_API_KEY = "re_test_notifications";
  process.env.MAIL_RETRY_LIMIT = "60";
  process.env.MAIL_RETRY_DELAY_SECONDS = "1";
  process.env.MAIL_RETRY_BACKOFF = "false";
  process.env.MAIL_SEND_TIMEOUT_MS = "3000";
  w = await moneyWorld();
  outbox = await import("~/models/notifications/outbox.server");
  sending = await import("~/models/notifications/delivery.server");
  boss = await import("~/jobs/queues.server");
  worker = await import("~/jobs/worker.server");
  models = {
    quotes: await import("~/models/requests/quotes.server"),
    matching: await import("~/models/labs/matching.server"),
    session: await import("~/utils/session.server"),
  };
  await w.onboardLab();
  clientEmails = await decidersOf(w.halvorsen.id);
  labEmails = await decidersOf(w.granite.id);
});

afterAll(async () => {
  await stopMail?.();
  await boss.stopBoss();
  await w.close();
  await fake.close();
});

describe("each milestone of the order flow", () => {
  it("writes exactly one message to each person of the right side and none to anybody outside the order's organisations", async () => {
    const { db, schema } = w;
    const orderId = await w.makeOrder();
    // A sample with a completed check, so "data delivered" carries a verdict.
    const [order] = await db.select().from(schema.orders).where(w.eq(schema.orders.id, orderId));
    const [sample] = await db.insert(schema.samples).values({ requestId: order.requestId, position: 0, label: "LFP-22", formula: "LiFePO4" }).returning();
    const [file] = await db
      .insert(schema.orderFiles)
      .values({
        orderId,
        sampleId: sample.id,
        name: "lfp-22.xy",
        version: 1,
        sizeBytes: 10,
        contentType: "text/plain",
        sha256: "0".repeat(64),
        storageKey: "k",
        state: "stored",
      })
      .returning();
    await db.insert(schema.scanChecks).values({ fileId: file.id, status: "done", verdict: "consistent" });

    await w.pay(orderId);
    await w.deliver(orderId);
    const orders = await import("~/models/orders/lifecycle.server");
    await orders.acceptDelivery(orderId, "client", w.owner.id);

    const expected: Record<string, string[]> = {
      funds_held: [...clientEmails, ...labEmails].sort(),
      samples_shipped: labEmails,
      samples_received: clientEmails,
      measuring_started: clientEmails,
      data_delivered: clientEmails,
      delivery_accepted: [...clientEmails, ...labEmails].sort(),
      payout_sent: labEmails,
    };
    const written = await rows({ orderId });
    const byKind = new Map<string, string[]>();
    for (const r of written) byKind.set(r.kind, [...(byKind.get(r.kind) ?? []), r.to]);
    expect(Object.fromEntries([...byKind].map(([k, v]) => [k, v.sort()]))).toEqual(expected);
    const insiders = new Set([...clientEmails, ...labEmails]);
    expect(written.every((r) => insiders.has(r.to))).toBe(true);
    // Members who neither decide nor act on this order are not written to.
    for (const bystander of ["member@halvorsen.example", "operator@graniteridge.example"]) expect(written.map((r) => r.to)).not.toContain(bystander);

    const delivered = written.find((r) => r.kind === "data_delivered")!;
    expect(delivered.text).toContain("LFP-22 — lfp-22.xy — consistent with the declared cell");
    expect(delivered.html).toContain("consistent with the declared cell");
    expect(delivered.text).toContain(`/client/orders/${orderId}`);
    expect(delivered.text).toMatch(/Next step: Review the data/);

    // Everyone also has an in-app notification per message.
    const notes = await db.select().from(schema.notifications).where(w.eq(schema.notifications.orderId, orderId));
    expect(notes.length).toBe(written.length);
  });

  it("tells the chosen lab its quote was accepted and the other lab it was not", async () => {
    const { db, schema, eq } = w;
    const [lakeside] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "lakeside-institute-x-ray-core"));
    const [request] = await db
      .insert(schema.requests)
      .values({ organisationId: w.halvorsen.id, createdBy: w.owner.id, title: "Two quotes", state: "open", rangeMin: 10, rangeMax: 90 })
      .returning();
    const quote = (labId: string) => ({
      requestId: request.id,
      labId,
      lineItems: [],
      totalMinor: 12_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 86_400_000),
      turnaroundDays: 5,
    });
    const [granite] = await db.insert(schema.quotes).values(quote(w.granite.id)).returning();
    await db.insert(schema.quotes).values(quote(lakeside.id));
    const answer = await models.quotes.acceptQuote(request.id, granite.id, w.halvorsen.id, w.owner.id);
    expect(answer.ok).toBe(true);
    expect((await rows({ kind: "quote_accepted" })).map((r) => r.to).sort()).toEqual(labEmails);
    expect((await rows({ kind: "quote_declined" })).map((r) => r.to).sort()).toEqual(await decidersOf(lakeside.id));
  });

  it("a new open request goes to the matching labs' owners and managers; a lab application to the admins only", async () => {
    const { db, schema } = w;
    const [request] = await db
      .insert(schema.requests)
      .values({ organisationId: w.halvorsen.id, createdBy: w.owner.id, title: "Open to all", state: "open", rangeMin: 10, rangeMax: 90 })
      .returning();
    const labIds = await models.matching.labsMatchingRequest(request.id);
    await db.transaction((tx) => outbox.notify(tx, { kind: "request_open", requestId: request.id, labIds }));
    const expectedLabs = (await Promise.all(labIds.map(decidersOf))).flat().sort();
    expect((await rows({ kind: "request_open" })).map((r) => r.to).sort()).toEqual([...new Set(expectedLabs)]);
    expect(expectedLabs).not.toContain("owner@halvorsen.example");

    await db.transaction((tx) => outbox.notify(tx, { kind: "lab_application_received", labId: w.granite.id }));
    expect((await rows({ kind: "lab_application_received" })).map((r) => r.to)).toEqual(["admin@diffractory.example"]);
  });

  it("respects a person's choice for optional messages, never for payment ones", async () => {
    const { db, schema, eq } = w;
    // The owner hears of every milestone of the client's orders, so their choice is the one tried.
    const member = (await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example")))[0];
    const inbox = await import("~/models/notifications/inbox.server");
    await inbox.savePreferences(member.id, new Set());
    const orderId = await w.makeOrder();
    await w.pay(orderId);
    await w.deliver(orderId);
    const sent = await rows({ orderId });
    expect(sent.filter((r) => r.to === member.email).map((r) => r.kind)).toEqual(["funds_held"]);
    // The in-app list still has every milestone.
    const notes = await db.select().from(schema.notifications).where(eq(schema.notifications.userId, member.id));
    expect(notes.filter((n) => n.orderId === orderId).length).toBe(4);
    const { MILESTONE_KINDS } = await import("~/domain/milestones");
    await inbox.savePreferences(member.id, new Set(MILESTONE_KINDS));
  });
});

describe("the outbox transaction", () => {
  it("a rolled-back state change leaves no outbox row and no notification", async () => {
    const { db, schema, eq } = w;
    const orderId = await w.makeOrder();
    const before = (await rows()).length;
    await expect(
      db.transaction(async (tx) => {
        const o = await w.app.orders.lockOrder(tx, orderId);
        await w.app.orders.moveOrder(tx, o, "cancelled", "client", w.owner.id, "Changed our mind");
        expect((await tx.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.orderId, orderId))).length).toBeGreaterThan(0);
        throw new Error("roll back");
      }),
    ).rejects.toThrow("roll back");
    expect((await rows()).length).toBe(before);
    expect(await rows({ orderId })).toEqual([]);
    expect(await db.select().from(schema.notifications).where(eq(schema.notifications.orderId, orderId))).toEqual([]);
  });
});

describe("sending", () => {
  it("delivers every message exactly once after a 30-second outage of the e-mail service", { timeout: 120_000 }, async () => {
    await fetch(`${mailBase}/_fake/messages`, { method: "DELETE" });
    const { db, schema } = w;
    // Everything written so far counts as sent already; this test looks at the burst only.
    await db.update(schema.outboxMessages).set({ status: "sent" });
    const b = await boss.getBoss();
    stopMail = await worker.startMailWorkers(b, { sweepMs: 500, workers: 2 });

    await fetch(`${mailBase}/_fake/outage?seconds=30`, { method: "POST" });
    const outageEnds = Date.now() + 30_000;
    const burst: string[] = [];
    for (let i = 0; i < 3; i++) {
      const orderId = await w.makeOrder(10_000 + i);
      burst.push(orderId);
      await w.pay(orderId);
      await w.deliver(orderId);
    }
    const written = (await rows()).filter((r) => r.orderId && burst.includes(r.orderId));
    expect(written.length).toBe(3 * (clientEmails.length + labEmails.length + labEmails.length + 3 * clientEmails.length));
    // During the outage nothing gets through, but attempts are being made and recorded.
    await waitFor(async () => (await rows()).some((r) => r.orderId !== null && burst.includes(r.orderId) && (r.lastError ?? "").includes("outage")), 15_000);
    expect((await fakeListing()).messages.length).toBe(0);

    await waitFor(async () => Date.now() >= outageEnds, 40_000, 200);
    const recovery = await waitFor(async () => {
      const now = (await rows()).filter((r) => r.orderId && burst.includes(r.orderId));
      return now.every((r) => r.status === "sent");
    }, 30_000);
    console.log(`outage recovery: every one of ${written.length} messages sent ${recovery} ms after the service came back`);

    const listing = await fakeListing();
    const keys = listing.messages.map((m) => m.idempotencyKey);
    expect(new Set(keys).size).toBe(keys.length);
    expect(keys.sort()).toEqual(written.map((r) => r.id).sort());
    expect(listing.sendAttempts).toBeGreaterThan(listing.messages.length);
    const after = (await rows()).filter((r) => r.orderId && burst.includes(r.orderId));
    expect(after.every((r) => r.status === "sent")).toBe(true);
    expect(after.filter((r) => r.attempts >= 2).length).toBeGreaterThan(after.length / 2);
  });

  it("a repeated delivery of one row is harmless: the fake keeps one message per idempotency key", async () => {
    const [row] = (await rows({ kind: "funds_held" })).filter((r) => r.status === "sent");
    await sending.resendTransport().send(row);
    const listing = await fakeListing();
    expect(listing.messages.filter((m) => m.idempotencyKey === row.id).length).toBe(1);
  });

  it("parks a message after the last attempt, lists it for admins, and an admin's retry sends it", { timeout: 30_000 }, async () => {
    const { db } = w;
    // The running workers meet a broken service and keep retrying; this direct attempt is the last one.
    sending.setMailTransport({ name: "broken", send: async () => Promise.reject(new Error("connection refused by the mail service")) });
    const orderId = await w.makeOrder();
    await db.transaction(async (tx) => {
      const o = await w.app.orders.lockOrder(tx, orderId);
      await w.app.orders.moveOrder(tx, o, "cancelled", "client", w.owner.id, "No longer needed");
    });
    const [row] = await rows({ orderId, kind: "order_cancelled" });
    expect(await sending.deliverOutboxMessage(row.id, { finalAttempt: true })).toBe("parked");
    expect((await rows({ orderId, kind: "order_cancelled" })).find((r) => r.id === row.id)?.status).toBe("parked");
    sending.setMailTransport(undefined);

    const adminPage = await import("~/routes/admin/outbox");
    const cookie = (await models.session.startSession(getRequest("/"), w.admin.id, null)).split(";")[0];
    const listed = await callRoute(adminPage.loader, getRequest("/admin/outbox", cookie));
    const parked = (listed.body as { rows: { id: string; lastError: string }[] }).rows.find((r) => r.id === row.id);
    expect(parked?.lastError).toContain("connection refused");

    const ownerCookie = (await models.session.startSession(getRequest("/"), w.owner.id, w.halvorsen.id)).split(";")[0];
    expect((await callRoute(adminPage.action, formRequest("/admin/outbox", { intent: "retry", id: row.id }, ownerCookie))).status).toBe(403);
    expect((await callRoute(adminPage.action, formRequest("/admin/outbox", { intent: "retry", id: "not-an-id" }, cookie))).status).toBe(400);
    expect((await callRoute(adminPage.action, formRequest("/admin/outbox", { intent: "retry", id: row.id }, cookie))).status).toBe(302);
    expect((await callRoute(adminPage.action, formRequest("/admin/outbox", { intent: "retry", id: row.id }, cookie))).status).toBe(409);
    await waitFor(async () => (await rows({ orderId, kind: "order_cancelled" })).every((r) => r.status === "sent"), 15_000);
  });

  it("the SMTP transport delivers the same subject, text and HTML to a local SMTP sink", async () => {
    const received: ParsedMail[] = [];
    const sink = new SMTPServer({
      authOptional: true,
      disabledCommands: ["STARTTLS", "AUTH"],
      onData(stream, _session, done) {
        simpleParser(stream)
          .then((m) => {
            received.push(m);
            done();
          })
          .catch(done);
      },
    });
    await new Promise<void>((r) => sink.listen(0, "127.0.0.1", r));
    const port = (sink.server.address() as AddressInfo).port;
    try {
      const [row] = await rows({ kind: "data_delivered" });
      await sending.smtpTransport(`smtp://127.0.0.1:${port}`).send(row);
      await waitFor(async () => received.length === 1, 5000, 20);
      const [mail] = received;
      expect(mail.subject).toBe(row.subject);
      expect((mail.to as { value: { address: string }[] }).value[0].address).toBe(row.to);
      expect(mail.text?.trim()).toBe(row.text.trim());
      expect(mail.html).toBe(row.html);
      expect(mail.messageId).toBe(`<${row.id}@diffractory.outbox>`);
    } finally {
      await new Promise<void>((r) => sink.close(() => r()));
    }
  });
});

describe("GET /api/notifications", () => {
  it("lists the signed-in person's notifications only, with the unread count, and marks them read", async () => {
    const api = await import("~/routes/api/notifications");
    const owner = (await models.session.startSession(getRequest("/"), w.owner.id, w.halvorsen.id)).split(";")[0];
    const lab = (await models.session.startSession(getRequest("/"), w.labManager.id, w.granite.id)).split(";")[0];
    const mine = await callRoute(api.loader, getRequest("/api/notifications", owner));
    expect(mine.status).toBe(200);
    const body = mine.body as { unread: number; items: { id: string; kind: string; orderId: string | null; createdAt: string; read: boolean }[] };
    expect(body.items.length).toBeGreaterThan(0);
    expect(Object.keys(body.items[0])).toEqual(expect.arrayContaining(["id", "kind", "orderId", "createdAt", "read"]));
    const { db, schema, eq } = w;
    const ownerIds = new Set(
      (await db.select({ id: schema.notifications.id }).from(schema.notifications).where(eq(schema.notifications.userId, w.owner.id))).map((r) => r.id),
    );
    expect(body.items.every((i) => ownerIds.has(i.id))).toBe(true);
    expect(body.unread).toBe(ownerIds.size);

    const theirs = (await callRoute(api.loader, getRequest("/api/notifications", lab))).body as typeof body;
    expect(theirs.items.some((i) => ownerIds.has(i.id))).toBe(false);

    // Marking someone else's notification changes nothing; bad input is a 400; signed out is a 401.
    const json = (cookie: string, payload: unknown) =>
      new Request("http://127.0.0.1:3000/api/notifications", {
        method: "POST",
        body: JSON.stringify(payload),
        headers: { "content-type": "application/json", Cookie: cookie, Origin: "http://127.0.0.1:3000" },
      });
    expect((await callRoute(api.action, json(lab, { ids: [body.items[0].id] }))).body).toMatchObject({ marked: 0 });
    expect((await callRoute(api.action, json(owner, { ids: ["nope"] }))).status).toBe(400);
    expect((await callRoute(api.action, json(owner, "all"))).status).toBe(400);
    expect((await callRoute(api.loader, getRequest("/api/notifications"))).status).toBe(401);
    expect((await callRoute(api.action, json(owner, { ids: [body.items[0].id] }))).body).toMatchObject({ marked: 1, unread: body.unread - 1 });
    expect((await callRoute(api.action, json(owner, { all: true }))).body).toMatchObject({ unread: 0 });
  });

  it("the e-mail settings screen refuses unknown kinds with a 400 and keeps essential ones on", async () => {
    const page = await import("~/routes/account/notifications");
    const owner = (await models.session.startSession(getRequest("/"), w.owner.id, w.halvorsen.id)).split(";")[0];
    expect((await callRoute(page.action, formRequest("/account/notifications", { intent: "save", email: "free_lunch" }, owner))).status).toBe(400);
    expect((await callRoute(page.action, formRequest("/account/notifications", { intent: "save" }, owner))).status).toBe(302);
    const shown = (await callRoute(page.loader, getRequest("/account/notifications", owner))).body as {
      preferences: { kind: string; emailEnabled: boolean }[];
    };
    expect(shown.preferences.find((p) => p.kind === "funds_held")?.emailEnabled).toBe(true);
    expect(shown.preferences.find((p) => p.kind === "quote_received")?.emailEnabled).toBe(false);
  });
});
