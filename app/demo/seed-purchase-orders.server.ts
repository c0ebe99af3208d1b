// Demo of purchase orders and currencies (docs/design.md#purchase-orders, #currencies): Pinecrest Solid Forms buys
// against purchase orders, so it requires a PO number on every order and its demo orders carry invented ones; an
// invented indicative EUR/USD rate ("demo rate") lets Halvorsen's request with quotes in EUR (Granite Ridge) and USD
// (Lakeside) show the conversion. Runs again on a seeded database without adding anything.
import { and, asc, eq, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { setExchangeRate } from "~/models/platform/exchange-rates.server";

const PO_CLIENT = "pinecrest-solid-forms";
const DEMO_SOURCE = "demo rate";

/** Invented purchase-order numbers in Pinecrest's own style, given in order-number order to orders without one. */
const poNumber = (n: number) => `PSF-PO-${String(4410 + n * 7).padStart(5, "0")}`;

export async function seedDemoPurchaseOrders() {
  const [client] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, PO_CLIENT));
  if (client) {
    await db.update(schema.organisations).set({ requiresPurchaseOrder: true }).where(eq(schema.organisations.id, client.id));
    const all = await db
      .select({ id: schema.orders.id, po: schema.orders.purchaseOrderNumber })
      .from(schema.orders)
      .where(eq(schema.orders.clientOrganisationId, client.id))
      .orderBy(asc(schema.orders.number));
    for (const [i, o] of all.entries()) {
      if (o.po) continue;
      await db
        .update(schema.orders)
        .set({ purchaseOrderNumber: poNumber(i + 1) })
        .where(and(eq(schema.orders.id, o.id), isNull(schema.orders.purchaseOrderNumber)));
    }
  }
  const [existing] = await db.select({ id: schema.exchangeRates.id }).from(schema.exchangeRates).where(eq(schema.exchangeRates.source, DEMO_SOURCE));
  if (!existing) {
    const [admin] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "admin@diffractory.example"));
    await setExchangeRate({ base: "EUR", quote: "USD", rate: "1.0850", asOf: new Date().toISOString().slice(0, 10), source: DEMO_SOURCE }, admin?.id ?? null);
  }
}
