// Notices that fit: the bell shows the organisation a person works in (with the other organisations' unread
// counts and a switch), the settings offer only the kinds that concern the person's roles, a milestone reaches
// the person who acts and the organisation's owners and managers rather than every member, and a daily digest
// collects optional e-mails into one letter. The rules are the project's own (docs/design.md, "Who is told").
import { and, eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { MILESTONES, type MilestoneKind } from "~/domain/milestones";
import { sendDailyDigests } from "~/models/notifications/digest.server";
import { ORDER_MILESTONES, notify } from "~/models/notifications/outbox.server";
import * as settingsPage from "~/routes/account/notifications";
import { action as switchAction } from "~/routes/account/switch-organisation";
import * as bellApi from "~/routes/api/notifications";
import { loader as clientRequestLoader } from "~/routes/client/request";
import { startSession } from "~/utils/session.server";
import { callRoute, formRequest, getRequest } from "./route-call";

type Bell = {
  unread: number;
  items: { id: string; title: string; href: string; organisationId: string | null; read: boolean }[];
  elsewhere: { organisationId: string; name: string; unread: number }[];
};

const people: Record<string, { id: string; email: string }> = {};
const orgs: Record<string, { id: string; name: string }> = {};

async function cookieOf(email: string, organisation: string | null) {
  return (await startSession(getRequest("/"), people[email].id, organisation ? orgs[organisation].id : null)).split(";")[0];
}

/** An open request of `org` written by `author`, quoted by Granite Ridge, the quote announced as the app does. */
async function quotedRequest(org: string, author: string, title: string) {
  const [request] = await db
    .insert(schema.requests)
    .values({ organisationId: orgs[org].id, createdBy: people[author].id, title, state: "open", draftStep: "review", rangeMin: 10, rangeMax: 90 })
    .returning();
  const [quote] = await db
    .insert(schema.quotes)
    .values({
      requestId: request.id,
      labId: orgs.granite.id,
      lineItems: [],
      totalMinor: 12_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 86_400_000),
      turnaroundDays: 5,
      createdBy: people["operator@graniteridge.example"].id,
    })
    .returning();
  const written = await db.transaction((tx) => notify(tx, { kind: "quote_received", quoteId: quote.id }));
  return { request, quote, written };
}

async function lettersTo(kind: string, requestTitle: string) {
  const rows = await db.select().from(schema.outboxMessages).where(eq(schema.outboxMessages.kind, kind));
  return rows
    .filter((r) => r.text.includes(requestTitle))
    .map((r) => r.to)
    .sort();
}

beforeAll(async () => {
  await seedDemo();
  for (const u of await db.select().from(schema.users)) people[u.email] = { id: u.id, email: u.email };
  for (const o of await db.select().from(schema.organisations)) {
    const key = { "halvorsen-cathode-works": "halvorsen", "pinecrest-solid-forms": "pinecrest", "granite-ridge-characterisation": "granite" }[o.slug];
    if (key) orgs[key] = { id: o.id, name: o.name };
  }
});

describe("who is told", () => {
  it("a quote reaches the request's author and the client's owners and managers, not every member", async () => {
    // The author is a plain member: they act on the request, so they hear of it; the other member does not.
    const { written } = await quotedRequest("pinecrest", "member@pinecrest.example", "Narrowed: quote to Pinecrest");
    const to = await lettersTo("quote_received", "Narrowed: quote to Pinecrest");
    expect(to).toEqual(["consultant@fieldnotes.example", "member@pinecrest.example", "owner@pinecrest.example"]);
    expect(written).toBe(3);

    // Written by the owner: the plain member is left out (before, every member of the organisation was written to).
    await quotedRequest("halvorsen", "owner@halvorsen.example", "Narrowed: quote to Halvorsen");
    const halvorsen = await lettersTo("quote_received", "Narrowed: quote to Halvorsen");
    expect(halvorsen).toEqual(["consultant@fieldnotes.example", "owner@halvorsen.example"]);
    const members = await db.select().from(schema.memberships).where(eq(schema.memberships.organisationId, orgs.halvorsen.id));
    expect(halvorsen.length).toBeLessThan(members.length);
  });

  it("a new request reaches the lab's managers, not its operators", async () => {
    const [request] = await db
      .insert(schema.requests)
      .values({
        organisationId: orgs.halvorsen.id,
        createdBy: people["owner@halvorsen.example"].id,
        title: "Narrowed: open to Granite",
        state: "open",
        rangeMin: 10,
        rangeMax: 90,
      })
      .returning();
    await db.transaction((tx) => notify(tx, { kind: "request_open", requestId: request.id, labIds: [orgs.granite.id] }));
    // Marcus Tillery manages Granite Ridge; Priya Castellanos operates its instruments.
    expect(await lettersTo("request_open", "Narrowed: open to Granite")).toEqual(["lab@graniteridge.example"]);
    const notices = await db
      .select()
      .from(schema.notifications)
      .where(eq(schema.notifications.href, `/lab/requests/${request.id}`));
    expect(notices.map((n) => n.organisationId)).toEqual([orgs.granite.id]);
  });

  it("the settings' kinds agree with who each order milestone is written to", () => {
    for (const rule of Object.values(ORDER_MILESTONES)) {
      const readers = MILESTONES[rule!.kind].for as readonly string[];
      for (const side of rule!.to) expect(readers, `${rule!.kind} is written to ${side}`).toContain(side);
    }
  });
});

describe("the bell of a person in two organisations", () => {
  it("shows the active organisation's notices, counts the other's, and switching leads to the notice instead of a 404", async () => {
    const consultant = "consultant@fieldnotes.example";
    const a = await quotedRequest("halvorsen", "owner@halvorsen.example", "Bell: Halvorsen's quote");
    const b = await quotedRequest("pinecrest", "owner@pinecrest.example", "Bell: Pinecrest's quote");
    expect(a.written && b.written).toBeTruthy();

    const inHalvorsen = await cookieOf(consultant, "halvorsen");
    const bell = (await callRoute(bellApi.loader, getRequest("/api/notifications", inHalvorsen))).body as Bell;
    expect(bell.items.map((i) => i.title).some((t) => t.includes("Bell: Halvorsen's quote"))).toBe(true);
    expect(bell.items.some((i) => i.title.includes("Bell: Pinecrest's quote"))).toBe(false);
    expect(bell.items.every((i) => i.organisationId === null || i.organisationId === orgs.halvorsen.id)).toBe(true);
    const pinecrestUnread = await db
      .select()
      .from(schema.notifications)
      .where(and(eq(schema.notifications.userId, people[consultant].id), eq(schema.notifications.organisationId, orgs.pinecrest.id)));
    expect(bell.elsewhere).toEqual([{ organisationId: orgs.pinecrest.id, name: "Pinecrest Solid Forms", unread: pinecrestUnread.length }]);

    // "Mark all read" marks the bell's notices only; Pinecrest's stay unread.
    const markAll = new Request("http://127.0.0.1:3000/api/notifications", {
      method: "POST",
      body: JSON.stringify({ all: true }),
      headers: { "content-type": "application/json", Cookie: inHalvorsen, Origin: "http://127.0.0.1:3000" },
    });
    expect((await callRoute(bellApi.action, markAll)).body).toMatchObject({ unread: 0 });
    const after = (await callRoute(bellApi.loader, getRequest("/api/notifications", inHalvorsen))).body as Bell;
    expect(after.elsewhere[0]?.unread).toBe(pinecrestUnread.length);

    // Pinecrest's notice leads to Pinecrest's request: opened while in Halvorsen (as from an e-mail), the page load
    // switches to Pinecrest and loads again with "Switched to …" (docs/design.md#records-that-hold).
    const [notice] = await db
      .select()
      .from(schema.notifications)
      .where(
        and(
          eq(schema.notifications.userId, people[consultant].id),
          eq(schema.notifications.organisationId, orgs.pinecrest.id),
          eq(schema.notifications.href, `/client/requests/${b.request.id}`),
        ),
      );
    expect(notice).toBeDefined();
    const opened = await callRoute(clientRequestLoader, getRequest(notice.href, inHalvorsen), { id: b.request.id });
    expect(opened.status).toBe(302);
    expect(opened.headers.get("location")).toBe(notice.href);
    // Back to Halvorsen, to follow the notice itself from there.
    expect((await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: orgs.halvorsen.id }, inHalvorsen))).status).toBe(302);
    const inBell = (await callRoute(bellApi.loader, getRequest("/api/notifications", inHalvorsen))).body as Bell;
    expect(inBell.elsewhere[0]?.unread).toBe(pinecrestUnread.length);

    // Following it switches first: the answer goes to the notice's page, marks it read, and the page opens.
    const followed = await callRoute(
      switchAction,
      formRequest("/switch-organisation", { organisationId: orgs.pinecrest.id, next: notice.href, notification: notice.id }, inHalvorsen),
    );
    expect(followed.status).toBe(302);
    expect(followed.headers.get("location")).toBe(notice.href);
    expect((await callRoute(clientRequestLoader, getRequest(notice.href, inHalvorsen), { id: b.request.id })).status).toBe(200);
    const switched = (await callRoute(bellApi.loader, getRequest("/api/notifications", inHalvorsen))).body as Bell;
    expect(switched.items.find((i) => i.id === notice.id)?.read).toBe(true);
    expect(switched.items.every((i) => i.organisationId === null || i.organisationId === orgs.pinecrest.id)).toBe(true);
    expect(switched.elsewhere).toEqual([]);
  });

  it("the switch refuses a destination outside the app and an organisation the person is not in", async () => {
    const cookie = await cookieOf("consultant@fieldnotes.example", "halvorsen");
    for (const next of ["//evil.example/x", "https://evil.example/", "/\\evil.example", "client"]) {
      const answer = await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: orgs.pinecrest.id, next }, cookie));
      expect(answer.status, next).toBe(400);
    }
    const owner = await cookieOf("owner@halvorsen.example", "halvorsen");
    const refused = await callRoute(switchAction, formRequest("/switch-organisation", { organisationId: orgs.pinecrest.id, next: "/client" }, owner));
    expect(refused.status).toBe(404);
  });

  it("a person in one organisation sees all their notices and no count elsewhere", async () => {
    const owner = await cookieOf("owner@halvorsen.example", "halvorsen");
    const bell = (await callRoute(bellApi.loader, getRequest("/api/notifications", owner))).body as Bell;
    const mine = await db.select().from(schema.notifications).where(eq(schema.notifications.userId, people["owner@halvorsen.example"].id));
    expect(bell.items.length).toBe(Math.min(30, mine.length));
    expect(bell.elsewhere).toEqual([]);
  });
});

describe("the settings by role", () => {
  const kindsShown = async (cookie: string) =>
    ((await callRoute(settingsPage.loader, getRequest("/account/notifications", cookie))).body as { preferences: { kind: MilestoneKind }[] }).preferences.map(
      (p) => p.kind,
    );

  it("offers a client only the client's kinds, a lab only the lab's, an admin the vetting ones", async () => {
    const client = await kindsShown(await cookieOf("owner@halvorsen.example", "halvorsen"));
    expect(client).toEqual(expect.arrayContaining(["quote_received", "samples_received", "data_delivered", "funds_held", "organisation_invitation"]));
    for (const labOnly of ["request_open", "quote_accepted", "quote_declined", "samples_shipped", "payout_sent", "lab_approved", "lab_application_received"])
      expect(client).not.toContain(labOnly);

    const lab = await kindsShown(await cookieOf("lab@graniteridge.example", "granite"));
    expect(lab).toEqual(expect.arrayContaining(["request_open", "quote_accepted", "samples_shipped", "payout_sent", "funds_held"]));
    for (const clientOnly of ["quote_received", "samples_received", "measuring_started", "data_delivered", "refused_on_arrival", "review_window_ending"])
      expect(lab).not.toContain(clientOnly);

    const admin = await kindsShown(await cookieOf("admin@diffractory.example", null));
    expect(admin).toContain("lab_application_received");
    expect(admin).not.toContain("quote_received");
  });

  it("refuses a kind that does not concern the person, and saving leaves the kinds not offered as they were", async () => {
    const cookie = await cookieOf("owner@pinecrest.example", "pinecrest");
    const refused = await callRoute(settingsPage.action, formRequest("/account/notifications", { intent: "save", email: "request_open" }, cookie));
    expect(refused.status).toBe(400);
    expect((refused.body as { error: string }).error).toMatch(/does not concern/);

    const userId = people["owner@pinecrest.example"].id;
    await db.insert(schema.notificationPreferences).values({ userId, kind: "request_open", emailEnabled: false }).onConflictDoNothing();
    const saved = await callRoute(settingsPage.action, formRequest("/account/notifications", { intent: "save", email: "quote_received" }, cookie));
    expect(saved.status).toBe(302);
    const rows = await db.select().from(schema.notificationPreferences).where(eq(schema.notificationPreferences.userId, userId));
    const off = rows.filter((r) => !r.emailEnabled).map((r) => r.kind);
    expect(off).toContain("request_open");
    expect(off).toContain("data_delivered");
    expect(off).not.toContain("quote_received");
    await db.delete(schema.notificationPreferences).where(eq(schema.notificationPreferences.userId, userId));
  });
});

describe("the daily digest", () => {
  it("holds a digest reader's optional e-mails, then sends them as one letter; others get theirs at once", async () => {
    const cookie = await cookieOf("owner@pinecrest.example", "pinecrest");
    const bad = await callRoute(settingsPage.action, formRequest("/account/notifications", { intent: "save", digest: "yes please" }, cookie));
    expect(bad.status).toBe(400);
    const kinds = Object.keys(MILESTONES).filter((k) => !MILESTONES[k as MilestoneKind].essential);
    const on = new URLSearchParams([["intent", "save"], ["digest", "on"], ...kinds.filter((k) => k === "quote_received").map((k) => ["email", k])]);
    const saved = await callRoute(
      settingsPage.action,
      new Request("http://127.0.0.1:3000/account/notifications", {
        method: "POST",
        body: on,
        headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: "http://127.0.0.1:3000", Cookie: cookie },
      }),
    );
    expect(saved.status).toBe(302);
    const shown = (await callRoute(settingsPage.loader, getRequest("/account/notifications", cookie))).body as { dailyDigest: boolean };
    expect(shown.dailyDigest).toBe(true);

    await quotedRequest("pinecrest", "owner@pinecrest.example", "Digest: first quote");
    await quotedRequest("pinecrest", "owner@pinecrest.example", "Digest: second quote");
    const held = await db
      .select()
      .from(schema.outboxMessages)
      .where(and(eq(schema.outboxMessages.to, "owner@pinecrest.example"), eq(schema.outboxMessages.digest, true), eq(schema.outboxMessages.status, "queued")));
    expect(held.length).toBe(2);
    // The consultant did not choose the digest: theirs are ordinary rows.
    const consultants = await db
      .select()
      .from(schema.outboxMessages)
      .where(and(eq(schema.outboxMessages.to, "consultant@fieldnotes.example"), eq(schema.outboxMessages.digest, true)));
    expect(consultants).toEqual([]);

    const day = new Date("2026-03-02T07:00:00Z");
    expect(await sendDailyDigests(day)).toBeGreaterThanOrEqual(1);
    const digests = await db
      .select()
      .from(schema.outboxMessages)
      .where(and(eq(schema.outboxMessages.kind, "daily_digest"), eq(schema.outboxMessages.to, "owner@pinecrest.example")));
    expect(digests).toHaveLength(1);
    expect(digests[0]).toMatchObject({ digest: false, essential: false, status: "queued", subject: "Your 2 Diffractory notices of 2026-03-02" });
    expect(digests[0].text).toContain("Digest: first quote");
    expect(digests[0].text).toContain("Digest: second quote");
    expect(digests[0].text).toContain("/account/notifications");
    const nowHeld = await db
      .select()
      .from(schema.outboxMessages)
      .where(
        inArray(
          schema.outboxMessages.id,
          held.map((h) => h.id),
        ),
      );
    expect(nowHeld.every((r) => r.status === "sent")).toBe(true);
    // Nothing left to gather: a second run writes no letter.
    expect(await sendDailyDigests(day)).toBe(0);
  });
});
