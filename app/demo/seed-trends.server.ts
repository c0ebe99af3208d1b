// Demo lots, trend and standing agreement (docs/design.md#lots-and-trends, docs/design.md#standing-agreements):
// Halvorsen's olivine cathode grade qualified with one ordinary order from Granite Ridge (an accepted quote), then a
// standing agreement proposed from that quote and agreed by the lab, and 23 lots over eleven months ordered under
// it without quotes — each paid at the payment fake, shipped, received, measured, delivered with a scan simulated
// by the engine from an invented "true" cell, checked in-process, and accepted, through the app's own functions;
// the order's dates are then set back to the lot's place in the year. The lots wander a little around the declared
// cell; from lot 21 on the plant's a axis creeps upwards, so lot 23 breaks a Western Electric rule and the
// material's QC person is told. Idempotent: a lot already ordered under the agreement is left alone.
import { and, eq, isNull, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { Cell } from "~/diffraction";
import { formatScanAsXy, mulberry32, simulatePattern } from "~/diffraction/simulate";
import { LITHIUM_IRON_PHOSPHATE } from "~/diffraction/structures";
import type { AcceptanceWindow } from "~/diffraction/phases";
import { isoDay } from "~/domain/agreements";
import { decideAgreement, orderLots, proposeAgreement } from "~/models/agreements/agreements.server";
import { acceptDelivery, markDelivered, markReceived, markShipped, startMeasuring } from "~/models/orders/lifecycle.server";
import { createOrderTx } from "~/models/orders/create.server";
import { onboardDemoLabs, payOrder } from "./seed-orders.server";
import { LFP_DECLARATION, LFP_SCAN, storeCheckedScan } from "./seed-scans.server";

export const TREND_DEMO_PRODUCT_CODE = "HCW-LFP-C20";
/** The one-off order the agreement was made from (its accepted quote sets the price per lot). */
export const TREND_DEMO_SOURCE_TITLE = "Qualification of LFP cathode grade C20, lot C20-2500";
const LOTS = 23;
const DAY = 86_400_000;
/** Net price per lot (EUR cents) of the source quote, and the agreement's budget cap: room for 33 lots. */
const PRICE_PER_LOT_MINOR = 18_000;
const BUDGET_CAP_MINOR = 600_000;
const INSTRUMENT = "Reflection diffractometer B (Co)";
// The plant's specification around the declared cell: every lot of the year is inside it, the drift included —
// the trend sees the creep long before the window would.
const WINDOW: AcceptanceWindow = {
  a: { plusMinus: 0.008, unit: "absolute" },
  b: { plusMinus: 0.006, unit: "absolute" },
  c: { plusMinus: 0.008, unit: "absolute" },
};

/** The invented true cell of lot i (0-based): a small lot-to-lot scatter, and from lot 21 a creep of a upwards. */
function trueCell(i: number, uniform: () => number): Cell {
  const wobble = () => (uniform() - 0.5) * 0.0016;
  const creep = i >= 20 ? 0.00045 * (i - 19) : 0;
  return { a: 10.326 + wobble() + creep, b: 6.006 + wobble() / 2, c: 4.695 + wobble() / 2, alpha: 90, beta: 90, gamma: 90 };
}

/** Day the lot's sample was taken and ordered: every two weeks, the last nine days before the seed. */
const lotDay = (i: number, now: number) => new Date(now - ((LOTS - 1 - i) * 14 + 9) * DAY);

async function person(email: string) {
  const [row] = await db.select({ id: schema.users.id, email: schema.users.email }).from(schema.users).where(eq(schema.users.email, email));
  return row;
}

/** Where the order's life is set back to (days after it was ordered): shipped, received, measuring, delivered, accepted. */
const TIMELINE = { funds_held: 0.1, samples_in_transit: 1, samples_received: 3, measuring: 4, data_delivered: 6, accepted: 8, paid_out: 8.05 } as const;

/**
 * Sets an order made just now back to `orderedAt`: every row of it moves by the same interval, then each step of
 * its timeline lands on its day (TIMELINE; `lateDays` delays the delivery past the due date). Its notices and
 * e-mails are old news by then: read and sent.
 */
async function setBack(orderId: string, madeFrom: Date, orderedAt: Date, lateDays = 0) {
  const shift = sql`make_interval(secs => ${(madeFrom.getTime() - orderedAt.getTime()) / 1000})`;
  const since = sql`${new Date(madeFrom.getTime() - 60_000).toISOString()}::timestamptz`;
  const at = (days: number) => new Date(orderedAt.getTime() + days * DAY).toISOString();
  const delivered = at(TIMELINE.data_delivered + lateDays);
  await db.transaction(async (tx) => {
    const [order] = await tx.select().from(schema.orders).where(eq(schema.orders.id, orderId));
    await tx.execute(
      sql`update requests set created_at = created_at - ${shift}, updated_at = updated_at - ${shift}, opened_at = opened_at - ${shift} where id = ${order.requestId}`,
    );
    await tx.execute(sql`update samples set created_at = created_at - ${shift} where request_id = ${order.requestId}`);
    await tx.execute(
      sql`update quotes set created_at = created_at - ${shift}, decided_at = decided_at - ${shift}, valid_until = valid_until - ${shift} where id = ${order.quoteId}`,
    );
    for (const table of ["payments", "ledger_transactions", "invoices", "shipments", "sample_receipts", "order_files"]) {
      await tx.execute(sql`update ${sql.identifier(table)} set created_at = created_at - ${shift} where order_id = ${orderId} and created_at >= ${since}`);
    }
    await tx.execute(sql`update payments set updated_at = updated_at - ${shift} where order_id = ${orderId}`);
    await tx.execute(
      sql`update notifications set created_at = created_at - ${shift}, read_at = created_at - ${shift} + interval '2 hours' where order_id = ${orderId} and created_at >= ${since}`,
    );
    await tx.execute(
      sql`update outbox_messages set created_at = created_at - ${shift}, sent_at = created_at - ${shift} + interval '1 minute', status = 'sent' where order_id = ${orderId} and created_at >= ${since}`,
    );
    for (const [state, days] of Object.entries(TIMELINE)) {
      const when = state === "data_delivered" ? delivered : at(days + (days > TIMELINE.data_delivered ? lateDays : 0));
      await tx.execute(sql`update order_events set created_at = ${when}::timestamptz where order_id = ${orderId} and to_state = ${state}`);
    }
    await tx.execute(
      sql`update order_events set created_at = ${orderedAt.toISOString()}::timestamptz where order_id = ${orderId} and to_state = 'awaiting_payment'`,
    );
    await tx.execute(
      sql`update orders set created_at = ${orderedAt.toISOString()}::timestamptz, updated_at = ${at(TIMELINE.paid_out + lateDays)}::timestamptz, delivered_at = ${delivered}::timestamptz, due_at = ${at(TIMELINE.samples_received)}::timestamptz + make_interval(days => ${order.dueAt && order.createdAt ? Math.round((order.dueAt.getTime() - order.createdAt.getTime()) / DAY) : 8}) where id = ${orderId}`,
    );
    // The scan was stored and checked three hours before the delivery; the lot is on record from then.
    const checked = new Date(Date.parse(delivered) - 3 * 3_600_000).toISOString();
    await tx.execute(sql`update order_files set stored_at = ${checked}::timestamptz where order_id = ${orderId}`);
    await tx.execute(
      sql`update scan_checks set created_at = ${checked}::timestamptz, started_at = ${checked}::timestamptz, finished_at = ${checked}::timestamptz + interval '40 seconds' where file_id in (select id from order_files where order_id = ${orderId})`,
    );
    await tx.execute(
      sql`update material_lots set measured_at = ${checked}::timestamptz + interval '40 seconds', created_at = ${checked}::timestamptz where order_id = ${orderId}`,
    );
  });
}

/** Pays a lot's order and takes it through shipping, receipt, measurement, a checked scan, delivery and acceptance. */
async function runOrder(
  orderId: string,
  people: { owner: { id: string; email: string }; labManager: { id: string } },
  sample: { id: string; label: string },
  cell: Cell,
  seed: number,
) {
  await payOrder(orderId, people.owner);
  await markShipped(orderId, people.owner.id, "Nordlys Express", `NLX-${seed}`);
  await markReceived(orderId, people.labManager.id, "Sealed jar, label matches the lot.");
  await startMeasuring(orderId, people.labManager.id, `On ${INSTRUMENT}.`);
  const fileName = `${sample.label}_Co_15-110.xy`;
  const scan = simulatePattern({ ...LFP_SCAN, structure: LITHIUM_IRON_PHOSPHATE, cell, noise: { seed } });
  await storeCheckedScan({
    orderId,
    sampleId: sample.id,
    fileName,
    text: formatScanAsXy(scan, `Diffractory demo scan ${fileName} (simulated, invented lot)`),
    uploadedBy: people.labManager.id,
  });
  await markDelivered(orderId, people.labManager.id, "Scan and lattice check in the data room.");
  await acceptDelivery(orderId, "client", people.owner.id);
}

/** The qualification order: an ordinary request, Granite Ridge's accepted quote on instrument B, paid and delivered. */
async function sourceOrder(clientId: string, labId: string, instrumentId: string, people: Parameters<typeof runOrder>[1], orderedAt: Date) {
  const [found] = await db
    .select({ id: schema.orders.id })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .where(and(eq(schema.requests.organisationId, clientId), eq(schema.requests.title, TREND_DEMO_SOURCE_TITLE)));
  if (found) return found.id;
  const madeFrom = new Date();
  const { orderId, sample } = await db.transaction(async (tx) => {
    const [request] = await tx
      .insert(schema.requests)
      .values({
        organisationId: clientId,
        createdBy: people.owner.id,
        title: TREND_DEMO_SOURCE_TITLE,
        state: "awarded",
        draftStep: "review",
        technique: "powder_reflection",
        rangeMin: 15,
        rangeMax: 110,
        currency: "EUR",
        openedAt: madeFrom,
      })
      .returning();
    const [sample] = await tx
      .insert(schema.samples)
      .values({
        requestId: request.id,
        position: 0,
        label: "C20-2500",
        ...LFP_DECLARATION,
        elements: ["Fe", "Li", "O", "P"],
        massMg: 500,
        acceptanceWindow: WINDOW,
      })
      .returning({ id: schema.samples.id, label: schema.samples.label });
    const [quote] = await tx
      .insert(schema.quotes)
      .values({
        requestId: request.id,
        labId,
        instrumentId,
        state: "accepted",
        lineItems: [{ description: "Reflection scan and lattice check per lot", quantity: 1, unitMinor: PRICE_PER_LOT_MINOR, totalMinor: PRICE_PER_LOT_MINOR }],
        totalMinor: PRICE_PER_LOT_MINOR,
        currency: "EUR",
        validUntil: new Date(madeFrom.getTime() + 14 * DAY),
        turnaroundDays: 8,
        notes: "Same price for every later lot of the grade.",
        requestRevision: request.revision,
        sentAt: madeFrom,
        decidedAt: madeFrom,
      })
      .returning();
    const order = await createOrderTx(tx, {
      requestId: request.id,
      quoteId: quote.id,
      clientOrganisationId: clientId,
      labId,
      netMinor: PRICE_PER_LOT_MINOR,
      currency: "EUR",
      po: null,
      actorUserId: people.owner.id,
      note: "Quote accepted",
      at: orderedAt,
    });
    return { orderId: order.id, sample };
  });
  await runOrder(orderId, people, sample, { ...trueCell(0, mulberry32(2026_19)) }, 2026_2499);
  await setBack(orderId, madeFrom, orderedAt);
  return orderId;
}

export async function seedDemoTrends() {
  const now = Date.now();
  const [halvorsen] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "halvorsen-cathode-works"));
  const [granite] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation"));
  if (!halvorsen || !granite) return { lots: 0 };
  const [instrument] = await db
    .select({ id: schema.instruments.id })
    .from(schema.instruments)
    .where(and(eq(schema.instruments.labId, granite.id), eq(schema.instruments.name, INSTRUMENT)));
  const [owner, qc, labManager] = await Promise.all([
    person("owner@halvorsen.example"),
    person("member@halvorsen.example"),
    person("lab@graniteridge.example"),
  ]);
  let [material] = await db
    .select()
    .from(schema.materials)
    .where(and(eq(schema.materials.organisationId, halvorsen.id), eq(schema.materials.productCode, TREND_DEMO_PRODUCT_CODE)));
  if (material) {
    // A demo seeded before the lots were orders keeps its record as it is.
    const [loose] = await db
      .select({ id: schema.materialLots.id })
      .from(schema.materialLots)
      .where(and(eq(schema.materialLots.materialId, material.id), isNull(schema.materialLots.orderId)))
      .limit(1);
    if (loose) return { lots: 0, materialId: material.id };
  } else {
    [material] = await db
      .insert(schema.materials)
      .values({
        organisationId: halvorsen.id,
        productCode: TREND_DEMO_PRODUCT_CODE,
        name: "Carbon-coated LFP cathode powder, grade C20",
        ...LFP_DECLARATION,
        massMg: 500,
        acceptanceWindow: WINDOW,
        technique: "powder_reflection",
        rangeMin: 15,
        rangeMax: 110,
        qcUserIds: qc ? [qc.id] : [],
        createdBy: owner?.id ?? null,
      })
      .returning();
  }
  await onboardDemoLabs();
  const people = { owner, labManager };

  // The agreement: proposed from the qualification order's accepted quote, agreed by Granite Ridge two days later.
  const sourceDay = new Date(lotDay(0, now).getTime() - 24 * DAY);
  let [agreement] = await db
    .select()
    .from(schema.standingAgreements)
    .where(and(eq(schema.standingAgreements.materialId, material.id), eq(schema.standingAgreements.labId, granite.id)));
  if (!agreement) {
    const source = await sourceOrder(halvorsen.id, granite.id, instrument.id, people, sourceDay);
    const proposedAt = new Date(sourceDay.getTime() + 12 * DAY);
    const agreedAt = new Date(proposedAt.getTime() + 2 * DAY);
    const endsOn = new Date(proposedAt);
    endsOn.setUTCMonth(endsOn.getUTCMonth() + 18);
    const proposed = await proposeAgreement(
      source,
      halvorsen.id,
      owner.id,
      { materialId: material.id, startsOn: isoDay(agreedAt), endsOn: isoDay(endsOn), budgetCapMinor: BUDGET_CAP_MINOR, noticeDays: 30 },
      proposedAt,
    );
    if (!proposed.ok) throw new Error(`demo: the C20 agreement could not be proposed: ${proposed.error}`);
    const agreed = await decideAgreement(proposed.agreementId, granite.id, labManager.id, true, "", agreedAt);
    if (!agreed.ok) throw new Error(`demo: the C20 agreement could not be agreed: ${agreed.error}`);
    await db.execute(
      sql`update standing_agreements set created_at = ${proposedAt.toISOString()}::timestamptz, updated_at = ${agreedAt.toISOString()}::timestamptz where id = ${proposed.agreementId}`,
    );
    // The proposal's and the agreement's notices belong to those days too, long read.
    await db.execute(
      sql`update notifications set created_at = ${proposedAt.toISOString()}::timestamptz, read_at = ${agreedAt.toISOString()}::timestamptz where order_id is null and href like ${`%${proposed.agreementId}%`}`,
    );
    [agreement] = await db.select().from(schema.standingAgreements).where(eq(schema.standingAgreements.id, proposed.agreementId));
  }

  const done = new Set(
    (
      await db
        .select({ code: schema.samples.lotCode })
        .from(schema.samples)
        .innerJoin(schema.orders, eq(schema.orders.requestId, schema.samples.requestId))
        .where(eq(schema.orders.agreementId, agreement.id))
    ).map((r) => r.code),
  );
  const uniform = mulberry32(2026_20);
  let made = 0;
  for (let i = 0; i < LOTS; i++) {
    const lotCode = `C20-${String(2501 + i)}`;
    // The cells are drawn in lot order whether or not the lot is made this run, so a resumed seed draws the same.
    const cell = trueCell(i, uniform);
    if (done.has(lotCode)) continue;
    const orderedAt = lotDay(i, now);
    const madeFrom = new Date();
    const ordered = await orderLots(agreement.id, halvorsen.id, owner.id, [lotCode], null, orderedAt);
    if (!ordered.ok) throw new Error(`demo: lot ${lotCode} could not be ordered under ${agreement.number}: ${ordered.error}`);
    const [sample] = await db
      .select({ id: schema.samples.id, label: schema.samples.lotCode })
      .from(schema.samples)
      .innerJoin(schema.orders, eq(schema.orders.requestId, schema.samples.requestId))
      .where(eq(schema.orders.id, ordered.orderId));
    // Each lot's scan is checked and recorded as it is delivered: the notice goes out for the lot that breaks a rule.
    await runOrder(ordered.orderId, people, { id: sample.id, label: sample.label ?? lotCode }, cell, 2026_2500 + i);
    // One lot of the year came three days late (the lab's on-time record shows it).
    await setBack(ordered.orderId, madeFrom, orderedAt, i === 8 ? 7 : 0);
    made++;
  }
  return { lots: made, materialId: material.id, agreementId: agreement.id };
}
