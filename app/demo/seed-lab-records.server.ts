// The lab's records in the demo: a receipt record (condition, seal, amount, storage place) for every demo order
// whose samples arrived, refusal reasons for the parcel refused on arrival, and measurement conditions the lab
// entered for one delivered scan. Idempotent: records already there are left as they are.
import { and, asc, eq, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { AmountUnit, ReceiptCondition, RefusalReason } from "~/domain/receipt";

/** Invented storage places, taken in turn. */
const PLACES = [
  "Desiccator 2, shelf B",
  "Sample cabinet C3, drawer 1",
  "Dry box 1, tray 4",
  "Fridge R2 (4 °C), rack A",
  "Sample cabinet C1, drawer 3",
  "Desiccator 1, shelf A",
];

/** One demo sample arrived with its outer bag torn; the rest in good order. */
const SPECIAL: Record<string, { condition: ReceiptCondition; sealIntact: boolean; note: string }> = {
  "HC-2645-2": { condition: "damaged", sealIntact: true, note: "Outer bag torn in transit; the inner vial and its seal are sound." },
};

/** The refused demo parcel: its reason per sample. */
const REFUSALS: Record<string, RefusalReason> = { "PSF-127-1": "mislabelled", "PSF-127-2": "not_as_declared" };

/** Measurement conditions the lab entered for a demo scan whose file states no temperature, atmosphere or holder. */
const SCAN_CONDITIONS: { fileName: string; conditions: { temperatureK: number; atmosphere: string; holder: string; note: string } } = {
  fileName: "HC-2645-2_Co_15-110.xy",
  conditions: {
    temperatureK: 296,
    atmosphere: "Air",
    holder: "Back-loaded steel cup, 25 mm, rotated at 15 rpm",
    note: "Measured the day after arrival, from the storage desiccator.",
  },
};

export async function seedDemoLabRecords() {
  // Every order whose samples were received, with the receipt's author and time from its timeline.
  const received = await db
    .select({ orderId: schema.orderEvents.orderId, at: schema.orderEvents.at, by: schema.orderEvents.actorUserId, requestId: schema.orders.requestId })
    .from(schema.orderEvents)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderEvents.orderId))
    .where(eq(schema.orderEvents.toState, "samples_received"))
    .orderBy(asc(schema.orderEvents.at));
  let made = 0;
  let place = 0;
  for (const r of received) {
    const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, r.requestId)).orderBy(asc(schema.samples.position));
    for (const [i, s] of samples.entries()) {
      const special = SPECIAL[s.label];
      const unit: AmountUnit = i % 2 === 0 ? "mg" : "g";
      const rows = await db
        .insert(schema.sampleReceipts)
        .values({
          orderId: r.orderId,
          sampleId: s.id,
          condition: special?.condition ?? "good",
          sealIntact: special?.sealIntact ?? true,
          amount: unit === "mg" ? 480 + 35 * i : 1.2 + 0.3 * i,
          amountUnit: unit,
          storagePlace: PLACES[place++ % PLACES.length],
          note: special?.note ?? "",
          receivedBy: r.by,
          receivedAt: r.at,
        })
        .onConflictDoNothing()
        .returning({ id: schema.sampleReceipts.id });
      made += rows.length;
    }
  }

  const refused = await db
    .select({
      orderId: schema.orderEvents.orderId,
      at: schema.orderEvents.at,
      by: schema.orderEvents.actorUserId,
      note: schema.orderEvents.note,
      requestId: schema.orders.requestId,
    })
    .from(schema.orderEvents)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.orderEvents.orderId))
    .where(eq(schema.orderEvents.toState, "refused_on_arrival"));
  for (const r of refused) {
    const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, r.requestId));
    for (const s of samples) {
      const reason = REFUSALS[s.label];
      if (!reason) continue;
      const rows = await db
        .insert(schema.sampleReceipts)
        .values({
          orderId: r.orderId,
          sampleId: s.id,
          condition: reason === "mislabelled" ? "mislabelled" : "good",
          sealIntact: false,
          refusalReason: reason,
          storagePlace: "",
          note: r.note,
          receivedBy: r.by,
          receivedAt: r.at,
        })
        .onConflictDoNothing()
        .returning({ id: schema.sampleReceipts.id });
      made += rows.length;
    }
  }

  const [operator] = await db.select({ name: schema.users.name }).from(schema.users).where(eq(schema.users.email, "operator@graniteridge.example"));
  await db
    .update(schema.orderFiles)
    .set({ conditions: { ...SCAN_CONDITIONS.conditions, enteredBy: operator?.name ?? null, enteredAt: new Date().toISOString() } })
    .where(and(eq(schema.orderFiles.name, SCAN_CONDITIONS.fileName), isNull(schema.orderFiles.conditions)));
  return made;
}
