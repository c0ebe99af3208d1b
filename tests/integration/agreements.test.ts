// Standing agreements on the real PostgreSQL with the payment fake: from an accepted quote to its tenth lot, each
// lot an order without a quote round, paid and posted to the ledger like any order; the cap stops the eleventh;
// ending by date and by notice; refusals change nothing (docs/design.md#standing-agreements).
// Amounts are invented; the ledger's expectations follow the money flow in docs/design.md#money-flow.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";

let w: MoneyWorld;
let agreements: typeof import("~/models/agreements/agreements.server");
let materialId: string;
let sourceOrderId: string;

const PRICE = 19_500; // net per lot, the source quote's total

beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
  agreements = await import("~/models/agreements/agreements.server");
  const [material] = await w.db
    .insert(w.schema.materials)
    .values({
      organisationId: w.halvorsen.id,
      productCode: "AGR-NMC-T",
      name: "Agreement test cathode",
      formula: "LiNi0.8Mn0.1Co0.1O2",
      crystalSystem: "trigonal",
      centering: "R",
      cellA: 2.87,
      cellB: 2.87,
      cellC: 14.2,
      cellAlpha: 90,
      cellBeta: 90,
      cellGamma: 120,
    })
    .returning();
  materialId = material.id;
  sourceOrderId = await w.makeOrder(PRICE);
});
afterAll(async () => {
  await w?.close();
});

async function ledgerFor(orderId: string) {
  return w.db
    .select({ account: w.schema.ledgerEntries.account, amount: w.schema.ledgerEntries.amountMinor })
    .from(w.schema.ledgerEntries)
    .innerJoin(w.schema.ledgerTransactions, w.eq(w.schema.ledgerTransactions.id, w.schema.ledgerEntries.transactionId))
    .where(w.eq(w.schema.ledgerTransactions.orderId, orderId));
}
const sum = (rows: { account: string; amount: number }[], account: string) => rows.filter((r) => r.account === account).reduce((s, r) => s + r.amount, 0);

/** Everything a refusal must leave alone: counts of the rows an order would add. */
async function snapshot() {
  const s = w.schema;
  return {
    orders: (await w.db.select({ id: s.orders.id }).from(s.orders)).length,
    requests: (await w.db.select({ id: s.requests.id }).from(s.requests)).length,
    samples: (await w.db.select({ id: s.samples.id }).from(s.samples)).length,
    quotes: (await w.db.select({ id: s.quotes.id }).from(s.quotes)).length,
    agreements: JSON.stringify(await w.db.select().from(w.schema.standingAgreements)),
  };
}

async function propose(overrides: Partial<import("~/models/agreements/agreements.server").ProposalInput> = {}) {
  const made = await agreements.proposeAgreement(
    sourceOrderId,
    w.halvorsen.id,
    w.owner.id,
    {
      materialId,
      startsOn: "2026-01-01",
      endsOn: "2027-12-31",
      budgetCapMinor: PRICE * 10 + PRICE / 2, // room for ten lots, not eleven
      noticeDays: 14,
      ...overrides,
    },
    new Date("2026-06-01T10:00:00Z"),
  );
  expect(made.ok, JSON.stringify(made)).toBe(true);
  return (made as { agreementId: string }).agreementId;
}

describe("an agreement from quote to its tenth lot", () => {
  it("is proposed from the quote, agreed by the lab, then each lot is an order without a quote round; the cap stops the eleventh", async () => {
    const id = await propose();
    const [proposed] = await w.db.select().from(w.schema.standingAgreements).where(w.eq(w.schema.standingAgreements.id, id));
    expect(proposed).toMatchObject({ state: "proposed", pricePerLotMinor: PRICE, currency: "EUR", turnaroundDays: 8 });
    expect(proposed.number).toMatch(/^SA-[A-Z0-9]+-2026-\d{4}$/);

    // Not active yet: refused, nothing changed.
    const before = await snapshot();
    const early = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["L-0"]);
    expect(early).toMatchObject({ ok: false });
    expect((early as { error: string }).error).toMatch(/not active yet/);
    expect(await snapshot()).toEqual(before);

    expect(await agreements.decideAgreement(id, w.granite.id, w.labManager.id, true)).toEqual({ ok: true });
    const sentQuotesBefore = (await w.db.select().from(w.schema.quotes).where(w.eq(w.schema.quotes.state, "sent"))).length;
    const quoteMailsBefore = (await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "quote_received"))).length;

    for (let lot = 1; lot <= 10; lot++) {
      const made = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, [`L-${lot}`]);
      expect(made.ok, JSON.stringify(made)).toBe(true);
      const { orderId } = made as { orderId: string };
      const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
      expect(order).toMatchObject({ state: "awaiting_payment", agreementId: id, currency: "EUR" });
      expect(order.amountMinor - order.taxMinor).toBe(PRICE);
      // Its sample is the material's lot.
      const samples = await w.db.select().from(w.schema.samples).where(w.eq(w.schema.samples.requestId, order.requestId));
      expect(samples.map((s) => [s.materialId, s.lotCode, s.formula])).toEqual([[materialId, `L-${lot}`, "LiNi0.8Mn0.1Co0.1O2"]]);
      // Paid by card through the fake, the money is held and posted as for any order.
      await w.pay(orderId);
      expect(await w.orderState(orderId)).toBe("funds_held");
      const rows = await ledgerFor(orderId);
      expect(sum(rows, "platform_cash")).toBe(order.amountMinor);
      expect(sum(rows, "funds_held")).toBe(-order.amountMinor);
    }
    // No quote was sent or announced for any lot: no round of quotes.
    expect((await w.db.select().from(w.schema.quotes).where(w.eq(w.schema.quotes.state, "sent"))).length).toBe(sentQuotesBefore);
    expect((await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "quote_received"))).length).toBe(quoteMailsBefore);

    const view = await agreements.agreementForParty(id, "client", w.halvorsen.id);
    expect(view!.usage).toMatchObject({ lots: 10, spentNetMinor: PRICE * 10, remainingMinor: PRICE / 2 });
    expect(view!.orders).toHaveLength(10);
    // The tenth lot left no room for another: the agreement ended because of its cap.
    expect(view!.agreement).toMatchObject({ state: "ended", endedBecause: "Its budget cap is reached" });

    const beforeEleventh = await snapshot();
    const eleventh = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["L-11"]);
    expect(eleventh).toMatchObject({ ok: false });
    expect(await snapshot()).toEqual(beforeEleventh);

    // Both sides were told of each move; the lab of each lot.
    const told = await w.db.select().from(w.schema.outboxMessages).where(w.eq(w.schema.outboxMessages.kind, "agreement_changed"));
    expect(told.some((m) => m.to === w.owner.email && /ended/.test(m.subject))).toBe(true);
    expect(told.filter((m) => m.to === w.labManager.email && /Lot ordered/.test(m.subject))).toHaveLength(10);
    const audited = await w.db.select().from(w.schema.auditLog).where(w.eq(w.schema.auditLog.subjectId, id));
    expect(audited.map((a) => a.action).sort()).toEqual(
      ["agreement_proposed", "agreement_agreed", "agreement_ended", ...Array(10).fill("agreement_lot_ordered")].sort(),
    );
  });

  it("refuses a lot that would pass the cap, one outside the period and a repeated lot code, changing nothing", async () => {
    const id = await propose({ budgetCapMinor: PRICE * 3, startsOn: "2026-01-01", endsOn: "2030-12-31" });
    await agreements.decideAgreement(id, w.granite.id, w.labManager.id, true);
    expect((await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["C-1"])).ok).toBe(true);
    const before = await snapshot();
    const tooMany = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["C-2", "C-3", "C-4"]);
    expect((tooMany as { error: string }).error).toMatch(/would cost .* but only .* of the budget cap remains/);
    const repeated = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["C-1"]);
    expect((repeated as { error: string }).error).toMatch(/already been ordered/);
    const late = await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["C-5"], null, new Date("2031-01-02T00:00:00Z"));
    expect((late as { error: string }).error).toMatch(/ran until 2030-12-31/);
    const otherClient = await agreements.orderLots(id, w.granite.id, w.owner.id, ["C-6"]);
    expect(otherClient.ok).toBe(false);
    expect(await snapshot()).toEqual(before);
  });
});

describe("ending", () => {
  it("ends at its end date in the scheduler's sweep, both sides told", async () => {
    const id = await propose({ startsOn: "2026-01-01", endsOn: "2026-12-31" });
    await agreements.decideAgreement(id, w.granite.id, w.labManager.id, true, "", new Date("2026-06-02T00:00:00Z"));
    expect(await agreements.endDueAgreements(new Date("2026-12-31T23:00:00Z"))).toBe(0);
    expect(await agreements.endDueAgreements(new Date("2027-01-01T00:30:00Z"))).toBeGreaterThanOrEqual(1);
    const [a] = await w.db.select().from(w.schema.standingAgreements).where(w.eq(w.schema.standingAgreements.id, id));
    expect(a).toMatchObject({ state: "ended", endedBecause: "Reached its end date, 2026-12-31" });
  });

  it("ends after notice; lots may still be ordered while notice runs", async () => {
    const id = await propose({ startsOn: "2026-01-01", endsOn: "2030-12-31", noticeDays: 30 });
    await agreements.decideAgreement(id, w.granite.id, w.labManager.id, true);
    const given = new Date();
    expect(await agreements.giveNotice(id, "lab", w.granite.id, w.labManager.id, "Instrument retiring", given)).toEqual({ ok: true });
    const [ending] = await w.db.select().from(w.schema.standingAgreements).where(w.eq(w.schema.standingAgreements.id, id));
    expect(ending.state).toBe("ending");
    expect(ending.endingAt!.getTime() - given.getTime()).toBe(30 * 86_400_000);
    expect((await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["N-1"])).ok).toBe(true);
    expect(await agreements.giveNotice(id, "client", w.halvorsen.id, w.owner.id, "Twice")).toMatchObject({ ok: false });
    await agreements.endDueAgreements(new Date(given.getTime() + 31 * 86_400_000));
    const [ended] = await w.db.select().from(w.schema.standingAgreements).where(w.eq(w.schema.standingAgreements.id, id));
    expect(ended).toMatchObject({ state: "ended", endedBecause: "Ended after notice: Instrument retiring" });
    expect((await agreements.orderLots(id, w.halvorsen.id, w.owner.id, ["N-2"])).ok).toBe(false);
  });

  it("a declined proposal ends and takes no lot", async () => {
    const id = await propose();
    expect(await agreements.decideAgreement(id, w.granite.id, w.labManager.id, false, "Not this year")).toEqual({ ok: true });
    const [a] = await w.db.select().from(w.schema.standingAgreements).where(w.eq(w.schema.standingAgreements.id, id));
    expect(a).toMatchObject({ state: "ended", endedBecause: "Declined by the lab: Not this year" });
  });
});
