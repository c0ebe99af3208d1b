// Every route in app/routes.ts, its loader and action, against every kind of actor, compared with what each
// may see: one demo order between Halvorsen (client A) and Granite Ridge (the lab) fills the parameters.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest, signInAs, type RouteAnswer } from "./route-call";

const PASSWORD = "diffractory-demo";
const ACTORS = {
  signedOut: null,
  ownerA: "owner@halvorsen.example",
  memberA: "member@halvorsen.example",
  clientB: "owner@pinecrest.example",
  labManager: "lab@graniteridge.example",
  labOperator: "operator@graniteridge.example",
  otherLab: "lab@lakeside.example",
  admin: "admin@diffractory.example",
  // The admin after the password but before the second-factor code: a session that opens nothing yet.
  halfSignedIn: "admin@diffractory.example",
  // The manager of a lab account created moments ago (beforeAll), not yet approved by an admin.
  unvettedLab: "manager@fresh-lab.example",
} as const;
type Actor = keyof typeof ACTORS;
type RouteFn = Parameters<typeof callRoute>[0];
const ACTOR_NAMES = Object.keys(ACTORS) as Actor[];

type Outcome = "ok" | "signin" | "forbidden" | "notFound" | "bad";
type PerActor = Record<Actor, Outcome>;
/** A route's expectation: per actor, for whichever of loader and action it exports; "public" means ok for everyone. */
type Expect = { loader?: PerActor | "public"; action?: PerActor | "public" };

/** The same outcome for everyone, with exceptions. */
const all = (outcome: Outcome, except: Partial<PerActor> = {}): PerActor =>
  ({ ...Object.fromEntries(ACTOR_NAMES.map((a) => [a, outcome])), ...except }) as PerActor;
// Shapes that recur: signed out (and half signed in) goes to sign-in; the rest as given.
const signedIn = (outcome: Outcome, except: Partial<PerActor> = {}) => all(outcome, { signedOut: "signin", halfSignedIn: "signin", ...except });
const clientA = (a: Outcome, others: Outcome, except: Partial<PerActor> = {}) => signedIn(others, { ownerA: a, memberA: a, ...except });
const labA = (a: Outcome, others: Outcome, except: Partial<PerActor> = {}) => signedIn(others, { labManager: a, labOperator: a, ...except });
const adminOnly = (others: Outcome, adminOutcome: Outcome = "ok") => signedIn(others, { admin: adminOutcome });

// Columns: signedOut, ownerA, memberA, clientB, labManager, labOperator, otherLab, admin, halfSignedIn, unvettedLab.
const orderClient = clientA("ok", "forbidden", { clientB: "notFound" }); // another client's order does not exist for them
const orderClientAction = clientA("bad", "forbidden", { clientB: "notFound" });
const clientWorkspace = signedIn("forbidden", { ownerA: "ok", memberA: "ok", clientB: "ok" });
const labWorkspace = signedIn("forbidden", { labManager: "ok", labOperator: "ok", otherLab: "ok", unvettedLab: "ok" });
// Manager-only lab settings: each manager changes their own lab (an empty form is refused), operators may not.
const labManagerAction = signedIn("forbidden", { labManager: "bad", otherLab: "bad", unvettedLab: "bad" });
const orderLab = labA("ok", "forbidden", { otherLab: "notFound", unvettedLab: "notFound" });
const orderLabAction = labA("bad", "forbidden", { otherLab: "notFound", unvettedLab: "notFound" });
// Both sides of the order read it; everyone else, admins included, is told it does not exist.
const orderParties = signedIn("notFound", { ownerA: "ok", memberA: "ok", labManager: "ok", labOperator: "ok" });
// The same for a party's form: an empty one is refused. (The matrix's order is not disputed, so an admin reads
// none of its data; tests/integration/disputes.test.ts covers the admin's reads of a disputed order.)
const orderPartiesAction = signedIn("notFound", { ownerA: "bad", memberA: "bad", labManager: "bad", labOperator: "bad" });
const adminPage = adminOnly("forbidden");
const adminAction = adminOnly("forbidden", "bad");

const EXPECTED: Record<string, Expect> = {
  // Marketing pages, the directory and the account forms are open to anyone by design.
  "routes/public/layout": { loader: "public" },
  "routes/public/home": { loader: "public" },
  "routes/public/labs": { loader: "public" },
  "routes/public/lab-profile": { loader: "public" },
  "routes/public/how-it-works": { loader: "public" },
  "routes/public/safety": { loader: "public" },
  "routes/public/design-system": { loader: "public" },
  // Signed-in people posting the account forms are sent to their workspace; a half signed-in session may start over.
  "routes/public/sign-in": { loader: "public", action: all("ok", { signedOut: "bad", halfSignedIn: "bad" }) },
  "routes/public/create-account": { loader: "public", action: all("ok", { signedOut: "bad", halfSignedIn: "bad" }) },
  "routes/public/forgot-password": { loader: "public", action: all("ok", { signedOut: "bad", halfSignedIn: "bad" }) },
  // The code screen: only the half signed-in session uses it (an empty form is refused); others are sent on.
  "routes/public/sign-in-code": { loader: all("ok", { signedOut: "signin" }), action: all("ok", { signedOut: "signin", halfSignedIn: "bad" }) },
  // The reset link is the permission: anyone holding it sees the form; an empty form is refused and uses nothing.
  "routes/public/reset-password": { loader: "public", action: all("bad") },
  // The share link is a bearer capability: whoever holds the token reads the shared files, signed in or not.
  "routes/public/shared": { loader: "public" },
  "routes/public/shared-download": { loader: "public" },
  // The invitation page is read by the invited address before it has an account; only that address accepts.
  "routes/public/invitation": { loader: "public", action: signedIn("forbidden") },
  "routes/public/not-found": { loader: all("notFound"), action: all("notFound") },

  // Sign-out needs no fields: posting it is the whole request.
  "routes/account/sign-out": { loader: "public", action: signedIn("ok") },
  "routes/account/switch-organisation": { loader: signedIn("ok"), action: signedIn("bad") },
  "routes/account/notifications": { loader: signedIn("ok"), action: signedIn("bad") },
  "routes/account/security": { loader: signedIn("ok"), action: signedIn("bad") },
  // The development mail viewer: admins only, and nobody else learns it exists.
  "routes/dev/mail": { loader: signedIn("notFound", { admin: "ok" }) },
  "routes/account/file-download": { loader: orderParties },
  "routes/account/order-dispute": { action: orderPartiesAction },
  // No evidence file of that id on the order (it has no dispute): the same 404 for everyone.
  "routes/account/dispute-evidence": { loader: signedIn("notFound") },

  "client-layout": { loader: clientWorkspace },
  "routes/client/home": { loader: clientWorkspace },
  "routes/client/members": { loader: clientWorkspace, action: signedIn("forbidden", { ownerA: "bad", clientB: "bad" }) },
  // Every member reads the profile; owners change their own organisation's (an empty form is refused).
  "routes/client/profile": { loader: clientWorkspace, action: signedIn("forbidden", { ownerA: "bad", clientB: "bad" }) },
  "routes/client/requests": { loader: clientWorkspace },
  "routes/client/data-room": { loader: clientWorkspace },
  "routes/client/data-room-order": { loader: orderClient, action: orderClientAction },
  "client-request-new": { loader: clientWorkspace, action: signedIn("forbidden", { ownerA: "bad", memberA: "bad", clientB: "bad" }) },
  "routes/client/request": { loader: orderClient, action: orderClientAction },
  "client-request-samples": { loader: orderClient, action: orderClientAction },
  "routes/client/request-hazards": { loader: orderClient, action: orderClientAction },
  "routes/client/request-measurement": { loader: orderClient, action: orderClientAction },
  "routes/client/request-labs": { loader: orderClient, action: orderClientAction },
  "routes/client/request-review": { loader: orderClient, action: orderClientAction },
  "routes/client/orders": { loader: clientWorkspace },
  "routes/client/payments": { loader: clientWorkspace },
  "routes/client/payment-receipt": { loader: orderClient },
  "routes/client/order": { loader: orderClient, action: orderClientAction },
  "routes/client/order-payment": { loader: orderClient },
  "routes/client/packing-slip": { loader: orderClient },
  "routes/client/request-sds-upload": { action: orderClientAction },
  "routes/client/request-po-upload": { action: orderClientAction },
  // Standing agreements: the client's own (another client's is a 404); an empty form is refused.
  "routes/client/order-agreement": { loader: orderClient, action: orderClientAction },
  "routes/client/agreements": { loader: clientWorkspace },
  "routes/client/agreement": { loader: orderClient, action: orderClientAction },
  // Materials: the organisation's own (another client's is a 404); an empty form is refused.
  "routes/client/materials": { loader: clientWorkspace },
  "client-material-new": { loader: clientWorkspace, action: signedIn("forbidden", { ownerA: "bad", memberA: "bad", clientB: "bad" }) },
  "client-material": { loader: orderClient, action: orderClientAction },
  "routes/client/material-sds-upload": { action: signedIn("forbidden", { ownerA: "bad", memberA: "bad", clientB: "bad" }) },
  // A material's trend, its CSV: the material's own organisation only (another client is told it does not exist).
  // Choosing the baseline is for owners, managers and the material's QC people (the matrix's material names none);
  // an empty form is refused.
  "routes/client/material-trend": { loader: orderClient, action: clientA("bad", "forbidden", { clientB: "notFound", memberA: "forbidden" }) },
  "routes/client/material-trend-csv": { loader: orderClient },

  "lab-layout": { loader: labWorkspace },
  "routes/lab/home": { loader: labWorkspace },
  "routes/lab/inbox": { loader: labWorkspace },
  "routes/lab/api-tokens": { loader: labWorkspace, action: labManagerAction },
  "routes/lab/members": { loader: labWorkspace, action: labManagerAction },
  "routes/lab/profile": { loader: labWorkspace, action: labManagerAction },
  "routes/lab/order-files": { loader: orderLab, action: orderLabAction },
  // Any staff acknowledges a hazard declaration; only managers send or withdraw a quote (the empty form is a quote).
  "routes/lab/request": { loader: orderLab, action: { ...orderLabAction, labOperator: "forbidden" } },
  "routes/lab/quotes": { loader: labWorkspace },
  "routes/lab/vetting": { loader: labWorkspace, action: labManagerAction },
  "routes/lab/capabilities": { loader: labWorkspace, action: labManagerAction },
  "routes/lab/price-list": { loader: labWorkspace, action: labManagerAction },
  // Posting payouts takes a manager to their own lab's payout onboarding; it needs no fields.
  // Statements: each lab reads its own months (a month without payouts is an empty statement); the fee invoice PDF
  // is for the lab it was issued to and for admins, and does not exist for anyone else.
  "routes/lab/statements": { loader: labWorkspace },
  "routes/lab/statement-file": { loader: labWorkspace },
  "routes/lab/fee-invoice-pdf": { loader: labA("ok", "forbidden", { otherLab: "notFound", unvettedLab: "notFound", admin: "ok" }) },
  "routes/lab/payouts": { loader: labWorkspace, action: signedIn("forbidden", { labManager: "ok", otherLab: "ok", unvettedLab: "ok" }) },
  "routes/lab/work-queue": { loader: labWorkspace },
  "routes/lab/order": { loader: orderLab, action: orderLabAction },
  "routes/lab/vetting-upload": { action: labManagerAction },
  "routes/lab/order-uploads": { action: orderLabAction },
  "routes/lab/order-upload": { action: orderLabAction },
  "routes/lab/order-receipt-photo": { action: orderLabAction },
  "routes/lab/agreements": { loader: labWorkspace },
  // Only owners and managers agree, decline or give notice (an empty form is refused); another lab's is a 404.
  "routes/lab/agreement": { loader: orderLab, action: { ...orderLabAction, labOperator: "forbidden" } },
  // An instrument's calibration record: its lab's staff read it, its managers record scans (an empty form is
  // refused); another lab's instrument does not exist for anyone else.
  "routes/lab/calibration": { loader: orderLab, action: signedIn("forbidden", { labManager: "bad", otherLab: "notFound", unvettedLab: "notFound" }) },
  "routes/lab/calibration-upload": { action: signedIn("forbidden", { labManager: "bad", otherLab: "notFound", unvettedLab: "notFound" }) },

  "admin-layout": { loader: adminPage },
  "routes/admin/home": { loader: adminPage },
  // Admins confirm a client's stated kind there (an empty form is refused).
  "routes/admin/users": { loader: adminPage, action: adminAction },
  "routes/admin/audit-log": { loader: adminPage },
  "routes/admin/vetting-queue": { loader: adminPage },
  "routes/admin/lab-review": { loader: adminPage, action: adminAction },
  "routes/admin/ledger": { loader: adminPage },
  "routes/admin/rates": { loader: adminPage, action: adminAction },
  "routes/admin/disputes": { loader: adminPage, action: adminAction },
  // The matrix's order has no dispute, so the admin is told there is none.
  "routes/admin/dispute": { loader: adminOnly("forbidden", "notFound"), action: adminOnly("forbidden", "notFound") },
  "routes/admin/outbox": { loader: adminPage, action: adminAction },
  "routes/admin/ledger-export": { loader: adminPage },
  "routes/admin/invoices": { loader: adminPage },
  // The export without a period is refused with a sentence, to admins only.
  "routes/admin/invoices-export": { loader: adminOnly("forbidden", "bad") },

  "routes/check": { loader: orderParties },
  // The check row here has no result yet, so its parties get 409 "no peaks table yet".
  "routes/check-peaks-csv": { loader: signedIn("notFound", { ownerA: "bad", memberA: "bad", labManager: "bad", labOperator: "bad" }) },
  "routes/check-result-json": { loader: orderParties },

  "routes/api/health": { loader: "public" },
  "routes/api/me": { loader: signedIn("ok") },
  "routes/api/notifications": { loader: signedIn("ok"), action: signedIn("bad") },
  // The public directory's JSON twin.
  "routes/api/labs": { loader: "public" },
  "routes/api/orders": { loader: signedIn("ok", { admin: "forbidden" }) },
  "routes/api/agreements": { loader: signedIn("ok", { admin: "forbidden" }) },
  "routes/api/materials": { loader: clientWorkspace },
  "routes/api/order-files": { loader: orderParties },
  // The paid order's invoice: its parties and admins (who read and export invoices) only.
  "routes/api/order-invoice": { loader: signedIn("notFound", { ownerA: "ok", memberA: "ok", labManager: "ok", labOperator: "ok", admin: "ok" }) },
  // The matrix's order has had no refund, so the credit note it names does not exist for anyone (a 404 alike);
  // tests/integration/invoices.test.ts reads real credit notes as parties and as outsiders.
  "routes/api/order-credit-note": { loader: signedIn("notFound") },
  // The instrument-computer API takes a bearer token only; a browser session is not one.
  "routes/api/v1/order-files": { action: all("signin") },
  "routes/api/v1/order-file-complete": { action: all("signin") },
  "routes/api/request-matches": { loader: orderClient },
  // Messages: only the two parties; the matrix's request has an order, so its request thread takes no new message
  // (400), and the client names no lab here (it reads its list of lab conversations, and a post without a lab is 400).
  "routes/api/request-messages": {
    loader: orderParties,
    action: signedIn("notFound", { ownerA: "bad", memberA: "bad", labManager: "bad", labOperator: "bad" }),
  },
  "routes/api/order-messages": { loader: orderParties, action: signedIn("notFound", { ownerA: "bad", memberA: "bad", labManager: "bad", labOperator: "bad" }) },
  "routes/api/order": { loader: orderParties },
  "routes/api/check": { loader: orderParties },
  // A material's trend for programs: its own organisation's members; anyone else gets the same 404.
  "routes/api/material-trend": { loader: signedIn("notFound", { ownerA: "ok", memberA: "ok" }) },
  "routes/api/admin/ledger-summary": { loader: adminPage },
  // Only the payment provider's signed POST is accepted: no signature is 400, a GET is 405.
  "routes/api/webhooks-payments": { loader: all("bad"), action: all("bad") },
};

interface Walked {
  id: string;
  path: string;
  file: string;
}

/** Walks the route config, joining prefixes, as React Router derives ids (the file without extension unless given). */
function walk(entries: { id?: string; path?: string; index?: boolean; file: string; children?: unknown[] }[], parent = ""): Walked[] {
  return entries.flatMap((r) => {
    const path = r.path ? `${parent.replace(/\/$/, "")}/${r.path}` : parent || "/";
    const id = r.id ?? r.file.replace(/\.[jt]sx?$/, "");
    const below = walk((r.children ?? []) as never, path);
    // A pathless layout answers at its children's URLs: the segments they all share.
    const own = !r.path && !r.index && below.length ? commonPrefix(below.map((b) => b.path)) : path;
    return [{ id, path: own, file: r.file }, ...below];
  });
}

function commonPrefix(paths: string[]) {
  const split = paths.map((p) => p.split("/").filter(Boolean));
  const shared: string[] = [];
  for (let i = 0; split.every((s) => i < s.length && s[i] === split[0][i]); i++) shared.push(split[0][i]);
  return `/${shared.join("/")}`;
}

let w: MoneyWorld;
let walked: Walked[] = [];
const params: Record<string, string> = {};
const requestIds: Record<string, string> = {};
const cookies: Partial<Record<Actor, string>> = {};
let signInAction: RouteFn;

async function signIn(actor: Actor) {
  const email = ACTORS[actor];
  if (!email) return undefined;
  const address = `198.51.100.${ACTOR_NAMES.indexOf(actor) + 1}`;
  // The half signed-in actor stops after the password; everyone else signs in fully (the admin with a code).
  cookies[actor] =
    actor === "halfSignedIn"
      ? cookieFrom(await callRoute(signInAction, formRequest("/sign-in", { email, password: PASSWORD }), {}, address))
      : (await signInAs(email, { password: PASSWORD, address })).cookie;
  expect(cookies[actor], `${email} signs in`).toBeTruthy();
  return cookies[actor];
}

function classify(answer: RouteAnswer): string {
  const { status } = answer;
  if (status === 401) return "signin";
  if (status >= 300 && status < 400) {
    const location = answer.headers.get("location") ?? "";
    return new URL(location, "http://127.0.0.1:3000").pathname === "/sign-in" ? "signin" : "ok";
  }
  if (status >= 200 && status < 300) return "ok";
  if (status === 403) return "forbidden";
  if (status === 404) return "notFound";
  if ([400, 405, 409, 410, 413, 422].includes(status)) return "bad";
  return `status ${status}`;
}

function fill(path: string) {
  return path
    .replace(/:(\w+)/g, (_, name: string) => {
      const value = params[name];
      if (!value) throw new Error(`no value for :${name} in ${path}`);
      return value;
    })
    .replace(/\*$/, "no-such-page");
}

function routeParams(path: string) {
  const out: Record<string, string> = {};
  for (const [, name] of path.matchAll(/:(\w+)/g)) out[name] = params[name];
  if (path.endsWith("*")) out["*"] = "no-such-page";
  return out;
}

async function orderStates() {
  const rows = await w.db.select({ id: w.schema.orders.id, state: w.schema.orders.state, updatedAt: w.schema.orders.updatedAt }).from(w.schema.orders);
  return Object.fromEntries(rows.map((r) => [r.id, `${r.state}@${r.updatedAt?.toISOString()}`]));
}

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  signInAction = (await import("~/routes/public/sign-in")).action;
  walked = walk((await import("~/routes")).default as never);

  // One delivered order of Halvorsen at Granite Ridge with a sample, its scan file and a finished check.
  const orderId = await w.makeOrder();
  await w.pay(orderId);
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  const [sample] = await w.db.insert(w.schema.samples).values({ requestId: order.requestId, label: "LFP lot 7", formula: "LiFePO4" }).returning();
  const [file] = await w.db
    .insert(w.schema.orderFiles)
    .values({
      orderId,
      sampleId: sample.id,
      name: "lot7.xy",
      version: 1,
      sizeBytes: 10,
      contentType: "text/plain",
      sha256: "0".repeat(64),
      storageKey: `k/${sample.id}`,
      state: "stored",
    })
    .returning();
  const [check] = await w.db.insert(w.schema.scanChecks).values({ fileId: file.id, status: "done", verdict: "consistent" }).returning();
  await w.deliver(orderId);
  const [payment] = await w.db.select().from(w.schema.payments).where(w.eq(w.schema.payments.orderId, orderId));

  const owner = await signIn("ownerA");
  const dataRoom = (await import("~/routes/client/data-room-order")).action;
  const shared = await callRoute(dataRoom, formRequest(`/client/data-room/${orderId}`, { intent: "share", label: "Matrix reader", days: "7" }, owner), {
    orderId,
  });
  const token = new URL((shared.body as { shared: { url: string } }).shared.url).pathname.split("/").pop()!;
  const members = (await import("~/routes/client/members")).action;
  expect(
    (await callRoute(members, formRequest("/client/members", { intent: "invite", email: "matrix-invitee@halvorsen.example", role: "member" }, owner))).status,
  ).toBe(302);
  const [mail] = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.to, "matrix-invitee@halvorsen.example"));
  const invitation = mail.text.match(/\/invitations\/([A-Za-z0-9_-]+)/)![1];
  // A live reset link of someone who is not an actor here.
  const { requestPasswordReset } = await import("~/models/accounts/password-reset.server");
  await requestPasswordReset({ email: "member@pinecrest.example", clientAddress: "198.51.100.99" });
  const [resetMail] = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.to, "member@pinecrest.example"));
  const passwordReset = resetMail.text.match(/\/reset-password\/([A-Za-z0-9_-]+)/)![1];

  Object.assign(params, {
    id: orderId,
    orderId,
    fileId: file.id,
    evidenceId: "00000000-0000-4000-8000-000000000000",
    labId: w.granite.id,
    slug: w.granite.slug,
    number: "CN-GRC-2026-9999",
    token,
  });
  // A platform fee invoice of Granite Ridge's, as the monthly job writes it.
  const { feeInvoiceDocument } = await import("~/domain/fee-invoice");
  const { platformParty } = await import("~/models/invoices/fee-invoices.server");
  const { takeDocumentNumber } = await import("~/models/invoices/numbering.server");
  const feeInvoice = await w.db.transaction(async (tx) => {
    const taken = await takeDocumentNumber(tx, "fee_invoice", null, new Date("2026-02-01T00:15:00Z"));
    const document = feeInvoiceDocument({
      number: taken.number,
      issuedAt: new Date("2026-02-01T00:15:00Z"),
      month: "2026-01",
      currency: "EUR",
      seller: platformParty(),
      buyer: { name: w.granite.name, address: null, taxId: null },
      decision: { treatment: "outside_eu", rateBps: 0, notes: [] },
      fees: [{ orderNumber: order.number, feeMinor: 1560, at: new Date("2026-01-20T10:00:00Z") }],
      formatMoney: (minor, currency) => `${currency} ${minor / 100}`,
    });
    await tx.insert(w.schema.invoices).values({
      kind: "fee_invoice",
      number: taken.number,
      series: taken.series,
      seq: taken.seq,
      recipientOrganisationId: w.granite.id,
      period: "2026-01",
      currency: "EUR",
      netMinor: document.totals.netMinor,
      taxMinor: 0,
      totalMinor: document.totals.grossMinor,
      document,
      sourceKey: `fee:${w.granite.id}:2026-01:EUR`,
    });
    return taken.number;
  });
  // A standing agreement proposed from the order, for one of Halvorsen's materials.
  const [material] = await w.db
    .insert(w.schema.materials)
    .values({ organisationId: w.halvorsen.id, productCode: "MATRIX-1", name: "Matrix material", formula: "LiFePO4", crystalSystem: "orthorhombic" })
    .returning();
  const { proposeAgreement } = await import("~/models/agreements/agreements.server");
  const proposed = await proposeAgreement(orderId, w.halvorsen.id, w.owner.id, {
    materialId: material.id,
    startsOn: "2026-01-01",
    endsOn: "2030-12-31",
    budgetCapMinor: 1_000_000,
    noticeDays: 14,
  });
  if (!proposed.ok) throw new Error(proposed.error);
  // Routes whose :id is not an order.
  const [instrument] = await w.db.select().from(w.schema.instruments).where(w.eq(w.schema.instruments.labId, w.granite.id));
  Object.assign(requestIds, {
    agreement: proposed.agreementId,
    material: material.id,
    request: order.requestId,
    check: check.id,
    payment: payment.id,
    invitation,
    passwordReset,
    feeInvoice,
    instrument: instrument.id,
  });
  // The unvetted lab applies through the sign-up form, as anyone can, seconds before the matrix runs.
  const createAccount = (await import("~/routes/public/create-account")).action;
  const applied = await callRoute(
    createAccount,
    formRequest("/create-account", {
      kind: "lab",
      name: "Fresh Lab Manager",
      email: ACTORS.unvettedLab,
      password: PASSWORD,
      organisationName: "Fresh Diffraction Lab",
      city: "Nowhere",
      country: "Netherlands",
    }),
  );
  expect(applied.headers.get("location")).toBe("/lab");
  for (const actor of ACTOR_NAMES) await signIn(actor);
});

/** :id and :token mean different records on different routes. */
function paramsFor(route: Walked) {
  const p = { ...params };
  if (/requests\/:id/.test(route.path)) p.id = requestIds.request;
  if (/checks\/:id/.test(route.path)) p.id = requestIds.check;
  if (/materials\/:id/.test(route.path)) p.id = requestIds.material;
  if (/payments\/:id/.test(route.path)) p.id = requestIds.payment;
  if (/agreements\/:id/.test(route.path)) p.id = requestIds.agreement;
  if (/instruments\/:id/.test(route.path)) p.id = requestIds.instrument;
  if (/invitations\/:token/.test(route.path)) p.token = requestIds.invitation;
  if (/reset-password\/:token/.test(route.path)) p.token = requestIds.passwordReset;
  if (/statements\/:file/.test(route.path)) p.file = "2026-11.csv";
  if (/fee-invoices\/:file/.test(route.path)) p.file = `${requestIds.feeInvoice}.pdf`;
  return p;
}

afterAll(async () => {
  await w?.close();
});

describe("authorisation matrix", () => {
  it("has an expectation for every route in app/routes.ts, and none for a route that is gone", () => {
    expect([...new Set(walked.map((r) => r.id))].sort()).toEqual(Object.keys(EXPECTED).sort());
  });

  it("answers every actor as expected on every loader and action, and an empty form changes no order", async () => {
    const before = await orderStates();
    const actual: Record<string, Expect> = {};
    const mismatches: string[] = [];
    const seen = new Set<string>();
    for (const route of walked) {
      if (seen.has(route.id)) continue;
      seen.add(route.id);
      const mod = (await import(/* @vite-ignore */ `~/${route.file.replace(/\.[jt]sx?$/, "")}`)) as { loader?: RouteFn; action?: RouteFn };
      const saved = { ...params };
      Object.assign(params, paramsFor(route));
      const path = fill(route.path);
      const p = routeParams(route.path);
      Object.assign(params, saved);
      for (const kind of ["loader", "action"] as const) {
        const fn = mod[kind];
        if (!fn) continue;
        const row = {} as Record<Actor, string>;
        for (const actor of ACTOR_NAMES) {
          const cookie = cookies[actor];
          const request = kind === "loader" ? getRequest(path, cookie) : formRequest(path, {}, cookie);
          let outcome: string;
          try {
            outcome = classify(await callRoute(fn, request, p, `203.0.113.${ACTOR_NAMES.indexOf(actor) + 1}`));
          } catch (error) {
            outcome = `threw ${String(error).slice(0, 120)}`;
          }
          row[actor] = outcome;
          // Signing out ends the session the next routes need.
          if (route.id === "routes/account/sign-out" && kind === "action" && ACTORS[actor]) await signIn(actor);
        }
        (actual[route.id] ??= {})[kind] = row as PerActor;
        const expected = EXPECTED[route.id]?.[kind];
        const want = expected === "public" ? all("ok") : expected;
        for (const actor of ACTOR_NAMES) {
          if (want?.[actor] !== row[actor]) mismatches.push(`${route.id} ${route.path} ${kind} ${actor}: expected ${want?.[actor]}, got ${row[actor]}`);
        }
      }
    }
    if (process.env.MATRIX_DUMP) (await import("node:fs")).writeFileSync(process.env.MATRIX_DUMP, JSON.stringify(actual, null, 1));
    expect(mismatches).toEqual([]);
    expect(await orderStates()).toEqual(before);
  });
});

/**
 * A lab request page shows the client's name, the samples and their safety data sheets' download links. Three
 * more requests of Halvorsen's: open to all (Granite Ridge fits it, Lakeside's transmission instrument does
 * not), invited-only with Lakeside invited, and open with a quote from Lakeside though it does not fit.
 */
describe("open requests as each lab reads them", () => {
  type Reader = "labManager" | "labOperator" | "otherLab" | "appliedLab" | "unvettedLab";
  type Kind = "open" | "invited" | "quoted";
  const READERS: Reader[] = ["labManager", "labOperator", "otherLab", "appliedLab", "unvettedLab"];
  const ids = {} as Record<Kind, string>;
  // Meridian: a seeded lab that has applied but is not approved, with an instrument that fits the open request.
  let appliedLab = "";

  async function makeRequest(kind: Kind) {
    const { db, schema } = w;
    const [r] = await db
      .insert(schema.requests)
      .values({
        organisationId: w.halvorsen.id,
        createdBy: w.owner.id,
        title: `Matrix ${kind} request`,
        state: "open",
        visibility: kind === "invited" ? "invited" : "open",
        rangeMin: 10,
        rangeMax: 90,
        deadline: "2099-06-30",
        openedAt: new Date(),
      })
      .returning();
    await db.insert(schema.samples).values({
      requestId: r.id,
      label: "LFP lot 9",
      formula: "LiFePO4",
      elements: ["Li", "Fe", "P", "O"],
      form: "powder",
      sdsFileName: "lfp-sds.pdf",
      sdsStorageKey: `requests/${w.halvorsen.id}/${r.id}/sds/lfp-sds.pdf`,
    });
    return r.id;
  }

  beforeAll(async () => {
    const { db, schema, eq } = w;
    const slug = async (s: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.slug, s)))[0].id;
    const lakeside = await slug("lakeside-institute-x-ray-core");
    for (const kind of ["open", "invited", "quoted"] as const) ids[kind] = await makeRequest(kind);
    await db.insert(schema.requestInvitations).values({ requestId: ids.invited, labId: lakeside });
    await db.insert(schema.quotes).values({
      requestId: ids.quoted,
      labId: lakeside,
      lineItems: [{ description: "Measurement", quantity: 1, unitMinor: 21_000, totalMinor: 21_000 }],
      totalMinor: 21_000,
      currency: "USD",
      validUntil: new Date(Date.now() + 14 * 86_400_000),
      turnaroundDays: 12,
    });
    appliedLab = (await signInAs("lab@meridian.example", { password: PASSWORD, address: "198.51.100.77" })).cookie!;
    // The premises: Meridian's instrument fits the open request and Lakeside's does not, so only approval tells them apart.
    const { loadMatchLabs, loadMatchRequest } = await import("~/models/labs/matching.server");
    const { matchLab } = await import("~/domain/matching");
    const request = (await loadMatchRequest(ids.open))!;
    const [meridian, lakesideLab] = await Promise.all([loadMatchLabs([await slug("meridian-analytical")]), loadMatchLabs([lakeside])]);
    expect(matchLab(request, meridian[0]).fits).toBe(true);
    expect(matchLab(request, lakesideLab[0]).fits).toBe(false);
  });

  const cookieOf = (reader: Reader) => (reader === "appliedLab" ? appliedLab : cookies[reader]);

  it("opens the page (and its data-sheet links) only for an approved lab that fits, is invited or has quoted; anyone else gets 404", async () => {
    const page = (await import("~/routes/lab/request")).loader as RouteFn;
    const expected: Record<Kind, Record<Reader, Outcome>> = {
      open: { labManager: "ok", labOperator: "ok", otherLab: "notFound", appliedLab: "notFound", unvettedLab: "notFound" },
      invited: { labManager: "notFound", labOperator: "notFound", otherLab: "ok", appliedLab: "notFound", unvettedLab: "notFound" },
      quoted: { labManager: "ok", labOperator: "ok", otherLab: "ok", appliedLab: "notFound", unvettedLab: "notFound" },
    };
    const actual = {} as Record<Kind, Record<Reader, string>>;
    for (const kind of Object.keys(expected) as Kind[]) {
      actual[kind] = {} as Record<Reader, string>;
      for (const reader of READERS) {
        const id = ids[kind];
        const answer = await callRoute(page, getRequest(`/lab/requests/${id}`, cookieOf(reader)), { id });
        actual[kind][reader] = classify(answer);
        if (answer.status === 200) expect(Object.keys((answer.body as { sds: Record<string, string> }).sds), `${kind} ${reader}`).toHaveLength(1);
        else expect(JSON.stringify(answer.body), `${kind} ${reader}`).not.toMatch(/Halvorsen|LFP lot 9|lfp-sds/);
      }
    }
    expect(actual).toEqual(expected);
  });

  it("lists in each lab's inbox only the open requests it fits or is invited to, and nothing for unapproved labs", async () => {
    const inbox = (await import("~/routes/lab/inbox")).loader as RouteFn;
    const expected: Record<Reader, Kind[]> = {
      labManager: ["open", "quoted"],
      labOperator: ["open", "quoted"],
      otherLab: ["invited"],
      appliedLab: [],
      unvettedLab: [],
    };
    const actual = {} as Record<Reader, Kind[]>;
    for (const reader of READERS) {
      const answer = await callRoute(inbox, getRequest("/lab/inbox", cookieOf(reader)));
      const listed = new Set((answer.body as { items: { id: string }[] }).items.map((i) => i.id));
      actual[reader] = (Object.keys(ids) as Kind[]).filter((k) => listed.has(ids[k]));
    }
    expect(actual).toEqual(expected);
  });

  it("keeps the matches API to the requesting client: every lab is refused (403)", async () => {
    const matches = (await import("~/routes/api/request-matches")).loader as RouteFn;
    for (const reader of READERS) {
      const answer = await callRoute(matches, getRequest(`/api/requests/${ids.open}/matches`, cookieOf(reader)), { id: ids.open });
      expect(classify(answer), reader).toBe("forbidden");
    }
  });
});
