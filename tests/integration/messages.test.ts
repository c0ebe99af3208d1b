// Messages between a client and a lab (docs/design.md#messages): who reaches which thread, posting and refusing,
// unread counts, notices to the other side, and the two API routes answering 404 to anyone not party.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, jsonRequest, signInAs } from "./route-call";

let w: MoneyWorld;
let m: typeof import("~/models/messages/messages.server");
let requestId: string;
let orderId: string;
const cookies: Record<string, string> = {};
const EMAILS = {
  owner: "owner@halvorsen.example",
  member: "member@halvorsen.example",
  clientB: "owner@pinecrest.example",
  labManager: "lab@graniteridge.example",
  labOperator: "operator@graniteridge.example",
  otherLab: "lab@lakeside.example",
  admin: "admin@diffractory.example",
} as const;
type Who = keyof typeof EMAILS;

type RouteFn = Parameters<typeof callRoute>[0];
let requestApi: { loader: RouteFn; action: RouteFn };
let orderApi: { loader: RouteFn; action: RouteFn };

const withCookie = (r: Request, who: Who) => {
  r.headers.set("Cookie", cookies[who]);
  return r;
};

beforeAll(async () => {
  w = await moneyWorld();
  m = await import("~/models/messages/messages.server");
  const { requestVisibleToLab } = await import("~/models/requests/requests.server");
  // A demo request of Halvorsen that is open and that Granite Ridge can see, but Lakeside cannot.
  const open = await w.db.select().from(w.schema.requests).where(w.eq(w.schema.requests.state, "open"));
  const lakeside = (await w.db.select().from(w.schema.organisations).where(w.eq(w.schema.organisations.slug, "lakeside-xrd-facility")))[0];
  for (const r of open) {
    if (r.organisationId !== w.halvorsen.id) continue;
    if (!(await requestVisibleToLab(r.id, w.granite.id))) continue;
    if (lakeside && (await requestVisibleToLab(r.id, lakeside.id))) continue;
    const [ordered] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.requestId, r.id));
    if (!ordered) {
      requestId = r.id;
      break;
    }
  }
  expect(requestId, "a demo open request Granite Ridge sees").toBeTruthy();
  orderId = await w.makeOrder();
  requestApi = (await import("~/routes/api/request-messages")) as never;
  orderApi = (await import("~/routes/api/order-messages")) as never;
  let n = 0;
  for (const [who, email] of Object.entries(EMAILS)) cookies[who] = (await signInAs(email, { address: `198.51.100.${++n}` })).cookie!;
});

afterAll(async () => {
  await w?.close();
});

describe("request threads", () => {
  it("lets a lab ask before quoting, and the client see the question as unread and answer it", async () => {
    const thread = (await m.requestThreadForLab(requestId, w.granite.id))!;
    expect(thread.open).toBe(true);
    const asked = await m.postMessage(thread, { userId: w.labManager.id, organisationId: w.granite.id }, { body: "  Is the powder ground below 10 µm?  " });
    expect(asked.ok).toBe(true);

    const unread = await m.unreadTotals(w.owner.id, w.halvorsen.id);
    expect(unread.requests).toBeGreaterThanOrEqual(1);
    // The lab never counts its own messages as unread.
    expect((await m.unreadThreads(w.labManager.id, w.granite.id)).find((t) => t.requestId === requestId)).toBeUndefined();

    // The client reads it through the API, naming the lab by its slug; reading marks it read.
    const read = await callRoute(requestApi.loader, withCookie(getRequest(`/api/requests/${requestId}/messages?lab=${w.granite.slug}`), "owner"), {
      id: requestId,
    });
    expect(read.status).toBe(200);
    const body = read.body as { messages: { body: string; side: string; authorName: string; authorOrganisationName: string; mine: boolean }[] };
    expect(body.messages.at(-1)).toMatchObject({ body: "Is the powder ground below 10 µm?", side: "lab", authorOrganisationName: w.granite.name, mine: false });
    expect((await m.unreadThreads(w.owner.id, w.halvorsen.id)).find((t) => t.requestId === requestId)).toBeUndefined();

    const answered = await callRoute(
      requestApi.action,
      withCookie(jsonRequest(`/api/requests/${requestId}/messages?lab=${w.granite.slug}`, { body: "Yes, sieved to 5 µm." }), "owner"),
      { id: requestId },
    );
    expect(answered.status).toBe(201);
    // The lab's view: its own thread, without naming a lab.
    const labRead = await callRoute(requestApi.loader, withCookie(getRequest(`/api/requests/${requestId}/messages`), "labOperator"), { id: requestId });
    expect((labRead.body as { messages: { body: string; side: string }[] }).messages.map((x) => [x.side, x.body]).slice(-2)).toEqual([
      ["lab", "Is the powder ground below 10 µm?"],
      ["client", "Yes, sieved to 5 µm."],
    ]);
  });

  it("tells the other side by notice and e-mail, not the author", async () => {
    const notices = await w.db.select().from(w.schema.notifications).where(w.eq(w.schema.notifications.kind, "message_posted"));
    const toOwner = notices.filter((n) => n.userId === w.owner.id);
    expect(toOwner.length).toBeGreaterThanOrEqual(1);
    expect(toOwner[0].organisationId).toBe(w.halvorsen.id);
    expect(toOwner[0].href).toContain(`/client/requests/${requestId}?lab=${w.granite.slug}`);
    // The lab manager wrote the question: they hear of the answer, but not of their own question.
    const toManager = notices.filter((n) => n.userId === w.labManager.id);
    expect(toManager).toHaveLength(1);
    expect(toManager[0].href).toBe(`/lab/requests/${requestId}#messages`);
    const mails = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "message_posted"));
    expect(mails.some((x) => x.to === EMAILS.owner && x.text.includes("Is the powder ground below 10 µm?"))).toBe(true);
  });

  it("refuses an empty message, one too long and an attachment from elsewhere with a sentence", async () => {
    const path = `/api/requests/${requestId}/messages`;
    for (const [body, words] of [
      [{ body: "   " }, "Write a message"],
      [{ body: "x".repeat(m.MESSAGE_MAX_LENGTH + 1) }, "at most 4000 characters"],
      [{ body: "See file", attachment: { storageKey: "requests/other/x.pdf", fileName: "x.pdf" } }, "Attach the file"],
      [{ body: "See file", attachment: "x.pdf" }, "Give the attachment"],
    ] as const) {
      const answer = await callRoute(requestApi.action, withCookie(jsonRequest(path, body), "labManager"), { id: requestId });
      expect(answer.status).toBe(400);
      expect((answer.body as { error: string }).error).toContain(words);
    }
    const notJson = new Request(`http://127.0.0.1:3000${path}`, {
      method: "POST",
      body: "{",
      headers: { "Content-Type": "application/json", Origin: "http://127.0.0.1:3000" },
    });
    expect((await callRoute(requestApi.action, withCookie(notJson, "labManager"), { id: requestId })).status).toBe(400);
    // The client must name the lab to write to.
    const noLab = await callRoute(requestApi.action, withCookie(formRequest(path, { body: "Hello" }), "owner"), { id: requestId });
    expect(noLab.status).toBe(400);
  });

  it("takes one attachment uploaded straight to storage under the thread, and links it for download", async () => {
    const path = `/api/requests/${requestId}/messages`;
    // The smallest PDF header and trailer (PDF 1.7, ISO 32000-1 §7.5): storage checks the first bytes are "%PDF-".
    const pdf = new TextEncoder().encode("%PDF-1.4\n1 0 obj<<>>endobj\ntrailer<<>>\n%%EOF\n");
    const target = await callRoute(
      requestApi.action,
      withCookie(
        formRequest(path, { intent: "upload-target", fileName: "holder-drawing.pdf", size: String(pdf.length), type: "application/pdf" }),
        "labOperator",
      ),
      { id: requestId },
    );
    expect(target.status).toBe(200);
    const { uploadUrl, storageKey } = (target.body as { target: { uploadUrl: string; storageKey: string } }).target;
    expect(storageKey.startsWith(`messages/requests/${requestId}/${w.granite.id}/`)).toBe(true);
    expect((await fetch(uploadUrl, { method: "PUT", body: pdf, headers: { "Content-Type": "application/pdf" } })).ok).toBe(true);
    const posted = await callRoute(
      requestApi.action,
      withCookie(
        formRequest(path, { body: "Our sealed holder, for reference.", attachmentKey: storageKey, attachmentName: "holder-drawing.pdf" }),
        "labOperator",
      ),
      { id: requestId },
    );
    expect(posted.status).toBe(201);
    const thread = (await m.requestThreadForLab(requestId, w.granite.id))!;
    const last = (await m.threadMessages(thread)).at(-1)!;
    expect(last.attachment).toMatchObject({ name: "holder-drawing.pdf", sizeBytes: pdf.length });
    expect(last.attachment!.url).toContain("holder-drawing.pdf");
    // A file type the rule does not take is refused before any upload.
    const refused = await callRoute(
      requestApi.action,
      withCookie(formRequest(path, { intent: "upload-target", fileName: "notes.exe", size: "10", type: "application/octet-stream" }), "labOperator"),
      { id: requestId },
    );
    expect(refused.status).toBe(400);
    expect((refused.body as { error: string }).error).toContain("Upload a PDF or an image");
  });

  it("lists the client's conversations per lab when no lab is named", async () => {
    const answer = await callRoute(requestApi.loader, withCookie(getRequest(`/api/requests/${requestId}/messages`), "member"), { id: requestId });
    expect(answer.status).toBe(200);
    const list = (answer.body as { threads: { lab: { slug: string }; messages: number }[] }).threads;
    expect(list.find((t) => t.lab.slug === w.granite.slug)?.messages).toBeGreaterThanOrEqual(2);
  });

  it("answers 404 to another client, a lab that cannot see the request, an admin, and to a lab the request is not open to", async () => {
    for (const who of ["clientB", "otherLab", "admin"] as const) {
      const get = await callRoute(requestApi.loader, withCookie(getRequest(`/api/requests/${requestId}/messages?lab=${w.granite.slug}`), who), {
        id: requestId,
      });
      expect(get.status, who).toBe(404);
      const post = await callRoute(requestApi.action, withCookie(formRequest(`/api/requests/${requestId}/messages`, { body: "Hi" }), who), { id: requestId });
      expect(post.status, who).toBe(404);
    }
    const wrongLab = await callRoute(requestApi.loader, withCookie(getRequest(`/api/requests/${requestId}/messages?lab=lakeside-xrd-facility`), "owner"), {
      id: requestId,
    });
    expect(wrongLab.status).toBe(404);
    const notAnId = await callRoute(requestApi.loader, withCookie(getRequest("/api/requests/nope/messages"), "labManager"), { id: "nope" });
    expect(notAnId.status).toBe(404);
    const signedOut = await callRoute(requestApi.loader, getRequest(`/api/requests/${requestId}/messages`), { id: requestId });
    expect(signedOut.status).toBe(401);
  });
});

describe("order threads", () => {
  it("carries messages between the order's client and lab, for the admin's dispute screen too", async () => {
    const posted = await callRoute(
      orderApi.action,
      withCookie(formRequest(`/api/orders/${orderId}/messages`, { body: "Parcel leaves on Monday." }), "member"),
      {
        id: orderId,
      },
    );
    expect(posted.status).toBe(201);
    const unread = await m.unreadTotals(w.labManager.id, w.granite.id);
    expect(unread.orders).toBe(1);
    const lab = await callRoute(orderApi.loader, withCookie(getRequest(`/api/orders/${orderId}/messages`), "labManager"), { id: orderId });
    expect(lab.status).toBe(200);
    expect((await m.unreadTotals(w.labManager.id, w.granite.id)).orders).toBe(0);
    const thread = await m.orderThreadMessages(orderId);
    expect(thread).toHaveLength(1);
    expect(thread[0]).toMatchObject({ body: "Parcel leaves on Monday.", side: "client", authorOrganisationName: w.halvorsen.name });
    expect(thread[0].authorName).toBeTruthy();
  });

  it("answers 404 to everyone not party to the order, admins included", async () => {
    for (const who of ["clientB", "otherLab", "admin"] as const) {
      expect((await callRoute(orderApi.loader, withCookie(getRequest(`/api/orders/${orderId}/messages`), who), { id: orderId })).status, who).toBe(404);
      expect(
        (await callRoute(orderApi.action, withCookie(formRequest(`/api/orders/${orderId}/messages`, { body: "Hi" }), who), { id: orderId })).status,
        who,
      ).toBe(404);
    }
  });

  it("closes the request thread once the request has an order", async () => {
    const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
    const thread = (await m.requestThreadForLab(order.requestId, w.granite.id))!;
    expect(thread.open).toBe(false);
    const refused = await m.postMessage(thread, { userId: w.labManager.id, organisationId: w.granite.id }, { body: "Late question" });
    expect(refused).toEqual({ ok: false, error: expect.stringContaining("order") });
  });
});

describe("demo messages", () => {
  it("seeds once: running the seed again adds nothing", async () => {
    const { seedDemoMessages } = await import("~/demo/seed-messages.server");
    await seedDemoMessages();
    const before = (await w.db.select().from(w.schema.messages)).length;
    expect(await seedDemoMessages()).toEqual({ messages: 0 });
    expect((await w.db.select().from(w.schema.messages)).length).toBe(before);
  });
});
