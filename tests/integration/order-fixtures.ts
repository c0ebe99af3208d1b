// An order written directly for tests that need one in a given state: an accepted quote of the lab on the given
// instrument, and the order with the number the app gives (docs/design.md#order-numbers).
import { db, schema } from "~/db/client.server";
import { takeOrderNumber } from "~/models/orders/numbers.server";

export async function acceptedQuoteAndOrder(a: {
  requestId: string;
  clientOrganisationId: string;
  labId: string;
  instrumentId: string;
  state?: (typeof schema.orders.$inferInsert)["state"];
}) {
  const [quote] = await db
    .insert(schema.quotes)
    .values({
      requestId: a.requestId,
      labId: a.labId,
      instrumentId: a.instrumentId,
      state: "accepted",
      lineItems: [],
      totalMinor: 10_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 86_400_000),
      turnaroundDays: 5,
    })
    .returning();
  const [order] = await db.transaction(async (tx) =>
    tx
      .insert(schema.orders)
      .values({
        requestId: a.requestId,
        quoteId: quote.id,
        number: await takeOrderNumber(tx, a.clientOrganisationId),
        clientOrganisationId: a.clientOrganisationId,
        labId: a.labId,
        amountMinor: 10_000,
        currency: "EUR",
        state: a.state ?? "measuring",
      })
      .returning(),
  );
  return { quote, order };
}
