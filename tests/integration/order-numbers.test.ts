// Order numbers on the real PostgreSQL (docs/design.md#order-numbers): consecutive per client organisation and
// year, each organisation its own sequence, no duplicates or gaps under concurrent accepts, and the migration that
// numbers the orders made before it. Organisation names are the demo's invented ones or invented here.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import { and, eq, inArray } from "drizzle-orm";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { parseOrderNumber } from "~/domain/order-number";
import { acceptQuote } from "~/models/requests/quotes.server";
import { root } from "../../services/paths";
import { databaseUrl } from "../../services/postgres";

const YEAR = new Date().getUTCFullYear();
const orgId = async (name: string) => (await db.select().from(schema.organisations).where(eq(schema.organisations.name, name)))[0].id;
const ownerOf = async (email: string) => (await db.select().from(schema.users).where(eq(schema.users.email, email)))[0];

let halvorsen: string;
let pinecrest: string;
let granite: string;

/** An open request of the organisation with one sent quote of Granite Ridge; returns both ids. */
async function openRequestWithQuote(organisationId: string, title: string) {
  const [r] = await db.insert(schema.requests).values({ organisationId, title, state: "open", rangeMin: 10, rangeMax: 90, openedAt: new Date() }).returning();
  const [q] = await db
    .insert(schema.quotes)
    .values({
      requestId: r.id,
      labId: granite,
      state: "sent",
      lineItems: [{ description: "Measurement", quantity: 1, unitMinor: 10_000, totalMinor: 10_000 }],
      totalMinor: 10_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 7 * 86_400_000),
      turnaroundDays: 5,
    })
    .returning();
  return { requestId: r.id, quoteId: q.id };
}

async function accept(organisationId: string, userId: string, title: string) {
  const { requestId, quoteId } = await openRequestWithQuote(organisationId, title);
  const result = await acceptQuote(requestId, quoteId, organisationId, userId);
  if (!result.ok) throw new Error(result.error);
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, result.orderId));
  return order;
}

/** The sequences already given to an organisation this year (the demo seed makes orders too). */
async function seqsOf(organisationId: string) {
  const rows = await db.select({ number: schema.orders.number }).from(schema.orders).where(eq(schema.orders.clientOrganisationId, organisationId));
  return rows
    .map((r) => parseOrderNumber(r.number))
    .filter((p) => p?.year === YEAR)
    .map((p) => p!.seq);
}

beforeAll(async () => {
  await seedDemo();
  halvorsen = await orgId("Halvorsen Cathode Works");
  pinecrest = await orgId("Pinecrest Solid Forms");
  granite = await orgId("Granite Ridge Characterisation");
});

describe("order numbers", () => {
  it("gives two orders of one organisation in one year consecutive numbers with its prefix", async () => {
    const owner = await ownerOf("owner@halvorsen.example");
    const before = Math.max(0, ...(await seqsOf(halvorsen)));
    const first = await accept(halvorsen, owner.id, "Numbering check A");
    const second = await accept(halvorsen, owner.id, "Numbering check B");
    expect(first.number).toBe(`HCW-${YEAR}-${String(before + 1).padStart(4, "0")}`);
    expect(second.number).toBe(`HCW-${YEAR}-${String(before + 2).padStart(4, "0")}`);
    const [org] = await db.select().from(schema.organisations).where(eq(schema.organisations.id, halvorsen));
    expect(org.orderPrefix).toBe("HCW");
  });

  it("keeps another organisation on a sequence of its own", async () => {
    const owner = await ownerOf("owner@pinecrest.example");
    const before = Math.max(0, ...(await seqsOf(pinecrest)));
    const order = await accept(pinecrest, owner.id, "Numbering check C");
    expect(order.number).toBe(`PSF-${YEAR}-${String(before + 1).padStart(4, "0")}`);
  });

  it("gives a new organisation whose initials are taken the next free prefix", async () => {
    const [twin] = await db
      .insert(schema.organisations)
      .values({ kind: "client", name: "Hollowmere Ceramic Workshop", slug: "hollowmere-ceramic-workshop" })
      .returning();
    const owner = await ownerOf("owner@halvorsen.example");
    const order = await accept(twin.id, owner.id, "Numbering check D");
    expect(order.number).toBe(`HCW2-${YEAR}-0001`);
  });

  it("hands out no number twice and skips none when ten orders of one organisation are accepted at once", async () => {
    const owner = await ownerOf("owner@halvorsen.example");
    const before = Math.max(0, ...(await seqsOf(halvorsen)));
    const made = await Promise.all(Array.from({ length: 10 }, (_, i) => openRequestWithQuote(halvorsen, `Concurrent numbering ${i}`)));
    const results = await Promise.all(made.map((m) => acceptQuote(m.requestId, m.quoteId, halvorsen, owner.id)));
    expect(results.every((r) => r.ok)).toBe(true);
    const ids = results.map((r) => (r.ok ? r.orderId : ""));
    const rows = await db.select({ number: schema.orders.number }).from(schema.orders).where(inArray(schema.orders.id, ids));
    const seqs = rows.map((r) => parseOrderNumber(r.number)!.seq).sort((a, b) => a - b);
    expect(seqs).toEqual(Array.from({ length: 10 }, (_, i) => before + 1 + i));
    const [counter] = await db
      .select()
      .from(schema.orderNumberCounters)
      .where(and(eq(schema.orderNumberCounters.organisationId, halvorsen), eq(schema.orderNumberCounters.year, YEAR)));
    expect(counter.lastSeq).toBe(before + 10);
  });
});

describe("the migration that introduces order numbers", () => {
  const name = `mig_${process.pid}_${Math.random().toString(36).slice(2, 8)}`;
  let folder = "";
  let client: pg.Client;

  beforeAll(async () => {
    const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
    await admin.connect();
    await admin.query(`create database ${name}`);
    await admin.end();
    // The migrations up to the one before order numbers: a copy of drizzle/ whose journal stops there.
    folder = fs.mkdtempSync(path.join(os.tmpdir(), "drizzle-before-numbers-"));
    fs.cpSync(path.join(root, "drizzle"), folder, { recursive: true });
    const journalPath = path.join(folder, "meta", "_journal.json");
    const journal = JSON.parse(fs.readFileSync(journalPath, "utf8"));
    const at = journal.entries.findIndex((e: { tag: string }) => e.tag.endsWith("_order_numbers"));
    expect(at).toBeGreaterThan(0);
    journal.entries = journal.entries.slice(0, at);
    fs.writeFileSync(journalPath, JSON.stringify(journal));
    const pool = new pg.Pool({ connectionString: databaseUrl(name), max: 1 });
    await migrate(drizzle(pool), { migrationsFolder: folder });
    await pool.end();
    client = new pg.Client({ connectionString: databaseUrl(name) });
    await client.connect();
  });

  afterAll(async () => {
    await client?.end();
    const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
    await admin.connect();
    await admin.query(`drop database if exists ${name} with (force)`);
    await admin.end();
    if (folder) fs.rmSync(folder, { recursive: true, force: true });
  });

  it("numbers the existing orders per organisation and year in the order they were made, and continues from there", async () => {
    const q = (text: string, values: unknown[] = []) => client.query(text, values);
    const org = async (name: string, kind = "client") =>
      (await q(`insert into organisations (kind, name, slug) values ($1, $2, $3) returning id`, [kind, name, name.toLowerCase().replaceAll(" ", "-")])).rows[0]
        .id as string;
    const lab = await org("Saltmarsh Diffraction Bench", "lab");
    await q(`insert into labs (organisation_id) values ($1)`, [lab]);
    const tern = await org("Tern Harbour Glassworks");
    const quill = await org("Quillfeather");
    const order = async (client: string, createdAt: string) => {
      const r = (await q(`insert into requests (organisation_id, title) values ($1, 'Old order') returning id`, [client])).rows[0].id;
      const qt = (
        await q(
          `insert into quotes (request_id, lab_id, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, '[]', 5000, 'EUR', now(), 5) returning id`,
          [r, lab],
        )
      ).rows[0].id;
      return (
        await q(
          `insert into orders (request_id, quote_id, client_organisation_id, lab_id, amount_minor, currency, created_at) values ($1, $2, $3, $4, 5000, 'EUR', $5) returning id`,
          [r, qt, client, lab, createdAt],
        )
      ).rows[0].id as string;
    };
    // Made out of order on purpose: the numbers follow created_at, not insertion.
    const t2 = await order(tern, "2025-06-01T10:00:00Z");
    const t1 = await order(tern, "2025-02-01T10:00:00Z");
    const t3 = await order(tern, "2026-01-03T10:00:00Z");
    const q1 = await order(quill, "2025-12-31T23:59:00Z");

    const pool = new pg.Pool({ connectionString: databaseUrl(name), max: 1 });
    await migrate(drizzle(pool), { migrationsFolder: path.join(root, "drizzle") });
    await pool.end();

    const numbers = Object.fromEntries((await q(`select id, number from orders`)).rows.map((r) => [r.id, r.number]));
    expect(numbers[t1]).toBe("THG-2025-0001");
    expect(numbers[t2]).toBe("THG-2025-0002");
    expect(numbers[t3]).toBe("THG-2026-0001");
    expect(numbers[q1]).toBe("QUI-2025-0001");
    const prefixes = (await q(`select name, order_prefix from organisations order by name`)).rows;
    expect(prefixes).toEqual([
      { name: "Quillfeather", order_prefix: "QUI" },
      { name: "Saltmarsh Diffraction Bench", order_prefix: null },
      { name: "Tern Harbour Glassworks", order_prefix: "THG" },
    ]);
    const counters = (
      await q(`select c.year, c.last_seq, o.order_prefix from order_number_counters c join organisations o on o.id = c.organisation_id order by 3, 1`)
    ).rows;
    expect(counters).toEqual([
      { year: 2025, last_seq: 1, order_prefix: "QUI" },
      { year: 2025, last_seq: 2, order_prefix: "THG" },
      { year: 2026, last_seq: 1, order_prefix: "THG" },
    ]);
    // The column is required from now on.
    const required = (await q(`select is_nullable from information_schema.columns where table_name = 'orders' and column_name = 'number'`)).rows[0];
    expect(required.is_nullable).toBe("NO");
  });
});
