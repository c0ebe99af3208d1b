// Demo of statements and platform fee invoices (docs/design.md#statements): the demo's settled orders were paid out
// last month, so each lab that was paid has a finished month with a statement and its fee invoice, issued the way
// the monthly job issues them. Runs again on a seeded database without moving or issuing anything twice.
import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";
import { monthOf, monthRange } from "~/domain/fee-invoice";
import { issueDueFeeInvoices } from "~/models/invoices/fee-invoices.server";

export async function seedDemoStatements(now = new Date()) {
  const { from } = monthRange(monthOf(now));
  const [issued] = (await db.execute<{ n: string }>(sql`select count(*) as n from invoices where kind = 'fee_invoice'`)).rows;
  if (Number(issued.n) === 0) {
    // The first seeding: every money movement of the orders the seed paid out moves back together, by as many days
    // as it takes to land in last month, so the payments still come before their payouts.
    const days = now.getUTCDate() + 2;
    await db.execute(sql`
      update ledger_transactions set created_at = created_at - make_interval(days => ${days})
      where order_id in (
        select order_id from ledger_transactions where kind = 'payout' and created_at >= ${from.toISOString()} and order_id is not null)
        and created_at >= ${from.toISOString()}`);
  }
  const runs = await issueDueFeeInvoices(now);
  return runs.flatMap((r) => r.issued);
}
