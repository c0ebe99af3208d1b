// Demo orders in the money states of the scenario, made through the real payment flow against the local fake.
import { and, eq } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { lockOrder, moveOrder } from "~/models/orders/lifecycle.server";
import { takeOrderNumber } from "~/models/orders/numbers.server";
import { acceptDelivery, cancelOrder, openDispute, resolveDispute } from "~/models/orders/lifecycle.server";
import { payoutOnboardingUrl, syncPayoutAccount } from "~/models/payments/provider.server";
import { startCheckout, syncCheckout } from "~/models/payments/checkout.server";

/** The fake's own test controls (never present at the real provider; the demo runs only against the fake). */
const fakeBase = () => `${config.payments.protocol}://${config.payments.host}:${config.payments.port}`;

export async function fakeControl(path: string, body: unknown) {
  const res = await fetch(`${fakeBase()}/_fake/${path}`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
  if (!res.ok) throw new Error(`payment fake ${path}: ${res.status} ${await res.text()}`);
  return res.json();
}

interface DemoOrder {
  title: string;
  client: string;
  lab: string;
  amountMinor: number;
  currency: string;
  /** How far the order has come. */
  to: "funds_held" | "paid_out" | "cancelled" | "resolved" | "awaiting_payment";
}

const ORDERS: DemoOrder[] = [
  {
    title: "Hot-stage series of NMC cathode HC-2540",
    client: "Halvorsen Cathode Works",
    lab: "Granite Ridge Characterisation",
    amountMinor: 42_500,
    currency: "EUR",
    to: "funds_held",
  },
  {
    title: "Lattice check of LFP reference lot HC-2398",
    client: "Halvorsen Cathode Works",
    lab: "Granite Ridge Characterisation",
    amountMinor: 19_500,
    currency: "EUR",
    to: "paid_out",
  },
  {
    title: "Screening of spinel LMO trial HC-2477",
    client: "Halvorsen Cathode Works",
    lab: "Granite Ridge Characterisation",
    amountMinor: 18_000,
    currency: "EUR",
    to: "cancelled",
  },
  {
    title: "Polymorph form II confirmation PSF-118",
    client: "Pinecrest Solid Forms",
    lab: "Granite Ridge Characterisation",
    amountMinor: 36_000,
    currency: "EUR",
    to: "resolved",
  },
  {
    title: "Phase identification of precursor HC-2602",
    client: "Halvorsen Cathode Works",
    lab: "Granite Ridge Characterisation",
    amountMinor: 21_000,
    currency: "EUR",
    to: "awaiting_payment",
  },
  {
    title: "Cryostat scan of hydrate PSF-131",
    client: "Pinecrest Solid Forms",
    lab: "Lakeside Institute X-ray Core",
    amountMinor: 23_000,
    currency: "USD",
    to: "awaiting_payment",
  },
];

/** Pays an order awaiting payment on the fake's card page with its success card, as the client would. */
export async function payOrder(orderId: string, person: { id: string; email: string }) {
  const url = await startCheckout(orderId, { userId: person.id, email: person.email });
  const sessionId = new URL(url).pathname.split("/").pop()!;
  await fakeControl(`pay/${sessionId}`, { card: "4242424242424242" });
  await syncCheckout(sessionId);
}

async function orgBySlugName(name: string) {
  const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.name, name));
  return org;
}

async function step(
  orderId: string,
  to: Parameters<typeof moveOrder>[2],
  mover: Parameters<typeof moveOrder>[3],
  actor: string | null,
  note: string,
  extra = {},
) {
  await db.transaction(async (tx) => moveOrder(tx, await lockOrder(tx, orderId), to, mover, actor, note, extra));
}

/** Both approved labs finish payout onboarding at the fake, so they can quote and be paid. */
export async function onboardDemoLabs() {
  const [labManager] = await db.select().from(schema.users).where(eq(schema.users.email, "lab@graniteridge.example"));
  for (const name of ["Granite Ridge Characterisation", "Lakeside Institute X-ray Core"]) {
    const org = await orgBySlugName(name);
    const [row] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, org.id));
    if (row.payoutsEnabled) continue;
    await payoutOnboardingUrl(org.id, labManager.email);
    const [lab] = await db.select().from(schema.labs).where(eq(schema.labs.organisationId, org.id));
    await fakeControl(`accounts/${lab.payoutAccountId}/complete-onboarding`, {});
    await syncPayoutAccount(lab.payoutAccountId!);
  }
}

export async function seedDemoOrders() {
  const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
  const [pinecrest] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@pinecrest.example"));
  const [admin] = await db.select().from(schema.users).where(eq(schema.users.email, "admin@diffractory.example"));
  const [labManager] = await db.select().from(schema.users).where(eq(schema.users.email, "lab@graniteridge.example"));
  await onboardDemoLabs();
  for (const o of ORDERS) {
    const client = await orgBySlugName(o.client);
    const lab = await orgBySlugName(o.lab);
    const existing = await db
      .select()
      .from(schema.requests)
      .where(and(eq(schema.requests.organisationId, client.id), eq(schema.requests.title, o.title)));
    if (existing.length > 0) continue;
    const person = o.client.startsWith("Pinecrest") ? pinecrest : owner;
    const [request] = await db
      .insert(schema.requests)
      .values({
        organisationId: client.id,
        createdBy: person.id,
        title: o.title,
        state: "awarded",
        draftStep: "review",
        rangeMin: 5,
        rangeMax: 90,
        openedAt: new Date(Date.now() - 20 * 86_400_000),
        currency: o.currency,
        technique: o.lab.startsWith("Lakeside") ? "powder_transmission" : "powder_reflection",
      })
      .returning();
    const [quote] = await db
      .insert(schema.quotes)
      .values({
        requestId: request.id,
        labId: lab.id,
        state: "accepted",
        lineItems: [{ description: "Measurement and lattice check per sample", quantity: 1, unitMinor: o.amountMinor, totalMinor: o.amountMinor }],
        totalMinor: o.amountMinor,
        currency: o.currency,
        validUntil: new Date(Date.now() + 14 * 86_400_000),
        turnaroundDays: 8,
        notes: "Demo quote.",
        decidedAt: new Date(),
      })
      .returning();
    const [order] = await db.transaction(async (tx) =>
      tx
        .insert(schema.orders)
        .values({
          requestId: request.id,
          quoteId: quote.id,
          number: await takeOrderNumber(tx, client.id),
          clientOrganisationId: client.id,
          labId: lab.id,
          amountMinor: o.amountMinor,
          currency: o.currency,
          platformFeeBps: config.payments.platformFeeBps,
        })
        .returning(),
    );
    await db.insert(schema.orderEvents).values({ orderId: order.id, toState: "awaiting_payment", actorUserId: person.id, note: "Quote accepted" });
    if (o.to === "awaiting_payment") continue;
    await payOrder(order.id, person);
    if (o.to === "cancelled") {
      await cancelOrder(order.id, "client", person.id, "The trial batch was withdrawn before shipping.");
      continue;
    }
    if (o.to === "funds_held") continue;
    await step(order.id, "samples_in_transit", "client", person.id, "Shipped by courier, tracking DEMO-4471-22.");
    await step(order.id, "samples_received", "lab", labManager.id, "Parcel matches its declaration.");
    await step(order.id, "measuring", "lab", labManager.id, "On reflection diffractometer B (Co).");
    await step(order.id, "data_delivered", "lab", labManager.id, "Scans and report uploaded.", { deliveredAt: new Date(Date.now() - 2 * 86_400_000) });
    if (o.to === "paid_out") {
      await acceptDelivery(order.id, "client", person.id);
      continue;
    }
    await openDispute(order.id, person.id, "Two of the three scans were measured on the wrong sample holder.");
    await resolveDispute(
      order.id,
      { userId: admin.id },
      Math.round(o.amountMinor / 3),
      "One of the three scans was unusable; a third of the total is refunded and the rest paid to the lab.",
    );
  }
}
