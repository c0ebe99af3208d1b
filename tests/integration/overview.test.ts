// The client and lab overviews: what waits for whom, counted from the organisations' own orders and quotes.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, getRequest, sessionCookieFor } from "./route-call";

let w: MoneyWorld;
beforeAll(async () => {
  w = await moneyWorld();
  await w.onboardLab();
});
afterAll(async () => w?.close());

type Overview = { waiting: { count: number; label: string; to: string }[]; orders: { state: string; count: number }[]; requestCount: number };

async function overviewOf(path: "/client" | "/lab", email: string) {
  const route = path === "/client" ? await import("~/routes/client/home") : await import("~/routes/lab/home");
  const answer = await callRoute(route.loader as never, getRequest(path, await sessionCookieFor(email)));
  expect(answer.status).toBe(200);
  return (answer.body as { overview: Overview }).overview;
}

describe("workspace overviews", () => {
  it("tell the client what to pay, ship and review, and the lab what to receive and measure", async () => {
    const unpaid = await w.makeOrder();
    const delivered = await w.makeOrder();
    await w.pay(delivered);
    await w.deliver(delivered);
    const shipped = await w.makeOrder();
    await w.pay(shipped);
    await w.db.transaction(async (tx) => w.app.orders.moveOrder(tx, await w.app.orders.lockOrder(tx, shipped), "samples_in_transit", "client", null, ""));

    const client = await overviewOf("/client", "owner@halvorsen.example");
    expect(client.waiting).toEqual(
      expect.arrayContaining([
        { count: 1, label: "order to pay", to: "/client/orders" },
        { count: 1, label: "delivery to review: accept it or open a dispute", to: "/client/data-room" },
      ]),
    );
    expect(client.orders).toEqual(
      expect.arrayContaining([
        { state: "awaiting_payment", count: 1 },
        { state: "samples_in_transit", count: 1 },
        { state: "data_delivered", count: 1 },
      ]),
    );
    expect(client.requestCount).toBeGreaterThanOrEqual(3);

    const lab = await overviewOf("/lab", "lab@graniteridge.example");
    expect(lab.waiting).toEqual(
      expect.arrayContaining([{ count: 1, label: "parcel on its way: check it against its declaration on arrival", to: "/lab/work-queue" }]),
    );
    expect(lab.orders.find((o) => o.state === "data_delivered")?.count).toBe(1);
    expect(unpaid).toBeTruthy();
  });

  it("counts only the viewer's own organisation", async () => {
    const other = await overviewOf("/client", "owner@pinecrest.example");
    expect(other.orders).toEqual([]);
    expect(other.waiting.find((x) => x.label.includes("to pay"))).toBeUndefined();
    const lakeside = await overviewOf("/lab", "lab@lakeside.example");
    expect(lakeside.orders).toEqual([]);
  });
});
