// Demo of paying by bank transfer (docs/design.md#bank-transfer): Pinecrest Solid Forms pays one Granite Ridge order
// by transfer in full (its money held, the ledger posted) and has sent part of another (shown as partly paid). The
// transfers "arrive" through the payment fake's test control; the organisations, people and orders are invented.
// Runs again on a seeded database without adding anything.
import { and, eq } from "drizzle-orm";
import { config } from "~/config.server";
import { db, schema } from "~/db/client.server";
import { takeOrderNumber } from "~/models/orders/numbers.server";
import { startBankTransfer, syncTransfer, type TransferInstructions } from "~/models/payments/bank-transfer.server";
import { fakeControl, onboardDemoLabs } from "~/demo/seed-orders.server";

export const TRANSFER_DEMO = {
  paid: { title: "Polymorph purity of API lot PSF-170", amountMinor: 31_500, arrivedMinor: 31_500, po: "PSF-PO-04520" },
  partial: { title: "Hydrate check of API lot PSF-174", amountMinor: 28_000, arrivedMinor: 10_000, po: "PSF-PO-04527" },
} as const;

async function demoOrder(d: (typeof TRANSFER_DEMO)[keyof typeof TRANSFER_DEMO], clientId: string, labId: string, personId: string) {
  const [request] = await db
    .insert(schema.requests)
    .values({
      organisationId: clientId,
      createdBy: personId,
      title: d.title,
      state: "awarded",
      draftStep: "review",
      rangeMin: 5,
      rangeMax: 60,
      openedAt: new Date(Date.now() - 9 * 86_400_000),
      currency: "EUR",
      technique: "powder_reflection",
    })
    .returning();
  const [quote] = await db
    .insert(schema.quotes)
    .values({
      requestId: request.id,
      labId,
      state: "accepted",
      lineItems: [{ description: "Measurement and lattice check per sample", quantity: 1, unitMinor: d.amountMinor, totalMinor: d.amountMinor }],
      totalMinor: d.amountMinor,
      currency: "EUR",
      validUntil: new Date(Date.now() + 10 * 86_400_000),
      turnaroundDays: 6,
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
        number: await takeOrderNumber(tx, clientId),
        clientOrganisationId: clientId,
        labId,
        amountMinor: d.amountMinor,
        currency: "EUR",
        platformFeeBps: config.payments.platformFeeBps,
        purchaseOrderNumber: d.po,
      })
      .returning(),
  );
  await db.insert(schema.orderEvents).values({ orderId: order.id, toState: "awaiting_payment", actorUserId: personId, note: "Quote accepted" });
  return order;
}

export async function seedDemoTransfers() {
  const [client] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "pinecrest-solid-forms"));
  const [lab] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation"));
  const [person] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@pinecrest.example"));
  if (!client || !lab || !person) return;
  await onboardDemoLabs();
  for (const d of Object.values(TRANSFER_DEMO)) {
    const [done] = await db
      .select({ id: schema.requests.id })
      .from(schema.requests)
      .where(and(eq(schema.requests.organisationId, client.id), eq(schema.requests.title, d.title)));
    if (done) continue;
    const order = await demoOrder(d, client.id, lab.id, person.id);
    const payment = await startBankTransfer(order.id, { userId: person.id });
    const reference = (payment.bankInstructions as unknown as TransferInstructions).reference;
    await fakeControl("transfers", { reference, amount: d.arrivedMinor });
    // The app may not be running to take the webhooks while the demo is seeded: ask the provider directly.
    await syncTransfer(payment.id);
  }
}

/** The demo's transfer orders, for the tour. */
export async function transferDemoIds() {
  const ids: Record<keyof typeof TRANSFER_DEMO, string> = { paid: "", partial: "" };
  for (const [key, d] of Object.entries(TRANSFER_DEMO) as [keyof typeof TRANSFER_DEMO, (typeof TRANSFER_DEMO)[keyof typeof TRANSFER_DEMO]][]) {
    const [row] = await db
      .select({ id: schema.orders.id })
      .from(schema.orders)
      .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
      .where(eq(schema.requests.title, d.title));
    ids[key] = row?.id ?? "";
  }
  return ids;
}
