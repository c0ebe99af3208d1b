// Set-based seeding of invented data for the benchmarks: labs for the directory, and for the load run also
// client organisations with 50,000 requests and 20,000 orders. Names are numbered; nothing resembles a real
// organisation or person. Run alone with `npx tsx bench/seed-load.ts` to (re)create the load database.
import pg from "pg";
import { ANODES } from "../app/diffraction/wavelengths";
import { ORDER_STATES } from "../app/domain/order-states";
import { hashPassword } from "../app/models/accounts/password.server";
import { migrateDatabase } from "../server/migrate";
import { databaseUrl } from "../services/postgres";
import { isMain } from "../services/process";
import { TEMPLATE_DB } from "../services/test-db";

export const LOAD_DB = "diffractory_load";
export const LOAD = {
  labs: 5000,
  clients: 400,
  requests: 50_000,
  /** Requests of the first client organisation, the one whose requests page is measured. */
  bigClientRequests: 2500,
  orders: 20_000,
  /** Every seeded client owner signs in with this password (e-mail load-owner-N@load.example). */
  password: "load-bench-password",
  ownerEmail: (n: number) => `load-owner-${n}@load.example`,
};

/**
 * Approved labs with two instruments each, a stage per instrument, a price list, and hazard acceptance for a
 * quarter of them. With `someApplied`, every lab whose number ends in 7 is still awaiting vetting.
 */
export async function seedSyntheticLabs(c: pg.ClientBase, n: number, { prefix = "Bench Lab", someApplied = false } = {}) {
  const slugPrefix = prefix.toLowerCase().replace(/\s+/g, "-");
  const description = `Synthetic lab for the ${prefix.toLowerCase()} benchmark`;
  await c.query(
    `
    with o as (
      insert into organisations (kind, name, slug, city, country)
      select 'lab', $2 || ' ' || g, $3 || '-' || g, 'Town ' || (g % 97), 'Country ' || (g % 23)
      from generate_series(1, $1) g returning id, slug
    ), l as (
      insert into labs (organisation_id, description, vetting_state)
      select id, $4, case when $5 and right(slug, 1) = '7' then 'applied'::vetting_state else 'approved'::vetting_state end from o
      returning organisation_id
    ), i as (
      insert into instruments (lab_id, name, technique, anode, monochromation, two_theta_min, two_theta_max, smallest_step, detector, energy_discrimination, sample_forms)
      select organisation_id, 'Instrument ' || k,
        (array['powder_reflection','powder_transmission','thin_film'])[1 + ((k - 1 + (hashtext(organisation_id::text) & 1)) % 3)]::technique,
        (array[${ANODES.map((a) => `'${a}'`).join(",")}])[1 + (((hashtext(organisation_id::text) & 65535) + k) % ${ANODES.length})]::anode,
        'k_alpha_doublet', 5, 120 + (k * 10), 0.01, 'strip_1d', k % 2 = 0, '{powder}'
      from l, generate_series(1, 2) k
      returning id
    )
    insert into sample_stages (instrument_id, name, min_temperature_k, max_temperature_k, atmospheres)
    select id, 'Stage', 80 + (hashtext(id::text) & 200), 400 + (hashtext(id::text) & 1023), '{air,nitrogen}' from i`,
    [n, prefix, slugPrefix, description, someApplied],
  );
  await c.query(
    `insert into price_lists (lab_id, currency, per_sample_minor, turnaround_days)
    select organisation_id, 'EUR', jsonb_build_object('powder_reflection', 9000 + (hashtext(organisation_id::text) & 16383), 'powder_transmission', 12000 + (hashtext(organisation_id::text) & 8191)), 3 + (hashtext(organisation_id::text) & 15)
    from labs where description = $1`,
    [description],
  );
  await c.query(
    `insert into hazard_acceptance (lab_id, pictograms, special_categories)
    select organisation_id, '{GHS06,GHS07,GHS08}', '{nanomaterial}' from labs where description = $1 and (hashtext(organisation_id::text) & 3) = 0`,
    [description],
  );
}

/**
 * Client organisations, each with an owner; 50,000 requests (the first organisation holds 2,500) in every
 * request state; samples; a sent quote on half the open requests; and for 20,000 requests an accepted quote,
 * the request awarded and an order in one of the order states with its timeline rows.
 */
async function seedMarket(c: pg.ClientBase) {
  const hash = await hashPassword(LOAD.password);
  await c.query(
    `insert into organisations (kind, name, slug, city, country)
     select 'client', 'Load Client ' || g, 'load-client-' || g, 'Town ' || (g % 89), 'Country ' || (g % 19) from generate_series(1, $1) g`,
    [LOAD.clients],
  );
  await c.query(
    `insert into users (email, name, password_hash)
     select 'load-owner-' || g || '@load.example', 'Load Owner ' || g, $2 from generate_series(1, $1) g`,
    [LOAD.clients, hash],
  );
  await c.query(`insert into memberships (user_id, organisation_id, role)
     select u.id, o.id, 'owner' from users u join organisations o on o.slug = 'load-client-' || substring(u.email from 'load-owner-([0-9]+)@')`);
  // Request g belongs to client 1 for g ≤ bigClientRequests, else to one of the others in turn.
  // g % 5 ∈ {0, 1} → awarded (these get the orders), 2 → open, 3 → draft, 4 → expired or withdrawn.
  await c.query(
    `create temporary table load_requests on commit drop as
     select g, case when g <= $2 then 1 else 2 + (g % ($3 - 1)) end as client,
       case when g % 5 in (0, 1) then 'awarded' when g % 5 = 2 then 'open' when g % 5 = 3 then 'draft'
            when g % 10 = 4 then 'expired' else 'withdrawn' end::request_state as state,
       now() - g * interval '7 minutes' as created_at
     from generate_series(1, $1) g`,
    [LOAD.requests, LOAD.bigClientRequests, LOAD.clients],
  );
  await c.query(`
    insert into requests (id, organisation_id, created_by, title, technique, state, draft_step, range_min, range_max,
      temperature_points_k, quality, deadline, budget_minor, currency, visibility, opened_at, created_at, updated_at)
    select md5('load-request-' || r.g)::uuid, o.id, m.user_id, 'Load request ' || r.g,
      (array['powder_reflection','powder_transmission'])[1 + r.g % 2]::technique, r.state,
      case when r.state = 'draft' then (array['hazards','measurement','labs','review'])[1 + r.g % 4] else 'review' end,
      case when r.state = 'draft' and r.g % 4 < 2 then null else 10 end, case when r.state = 'draft' and r.g % 4 < 2 then null else 90 end,
      '{298}', 'standard', case when r.state = 'draft' and r.g % 4 < 2 then null else (r.created_at + interval '30 days')::date end,
      20000 + (r.g % 50) * 1000, 'EUR', 'open',
      case when r.state = 'draft' then null else r.created_at + interval '1 hour' end, r.created_at, r.created_at + interval '1 hour'
    from load_requests r
    join organisations o on o.slug = 'load-client-' || r.client
    join memberships m on m.organisation_id = o.id`);
  await c.query(`
    insert into samples (request_id, position, label, formula, elements, form, mass_mg, created_at)
    select md5('load-request-' || r.g)::uuid, k - 1, 'S' || k, (array['SiO2','TiO2','ZnO'])[k], (array['{Si,O}','{Ti,O}','{Zn,O}'])[k]::text[], 'powder', 200, r.created_at
    from load_requests r, generate_series(1, 1 + r.g % 3) k`);
  // Quotes come from lab number 1 + g % labs; the accepted ones become orders.
  await c.query(
    `create temporary table load_labs on commit drop as
     select row_number() over (order by o.slug) - 1 as n, l.organisation_id as id
     from labs l join organisations o on o.id = l.organisation_id where l.description = 'Synthetic lab for the load lab benchmark'`,
  );
  await c.query(
    `insert into quotes (id, request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days, created_at, decided_at)
     select md5('load-quote-' || r.g)::uuid, md5('load-request-' || r.g)::uuid, ll.id,
       case when r.state = 'awarded' then 'accepted' else 'sent' end::quote_state,
       jsonb_build_array(jsonb_build_object('description', 'Measurement', 'quantity', 1, 'unitMinor', 18000, 'totalMinor', 18000)),
       18000, 'EUR', r.created_at + interval '14 days', 10, r.created_at + interval '2 hours',
       case when r.state = 'awarded' then r.created_at + interval '3 hours' end
     from load_requests r join load_labs ll on ll.n = r.g % $1
     where r.state = 'awarded' or (r.state = 'open' and r.g % 10 = 2)`,
    [LOAD.labs],
  );
  const states = ORDER_STATES.map((s) => `'${s}'`).join(",");
  const delivered = ["data_delivered", "accepted", "paid_out", "disputed", "resolved"].map((s) => `'${s}'`).join(",");
  await c.query(`
    insert into orders (id, request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency, delivered_at, created_at, updated_at)
    select md5('load-order-' || r.g)::uuid, q.request_id, q.id, rq.organisation_id, q.lab_id,
      (array[${states}])[1 + (r.g / 5) % ${ORDER_STATES.length}]::order_state, q.total_minor, q.currency,
      case when (array[${states}])[1 + (r.g / 5) % ${ORDER_STATES.length}] in (${delivered}) then r.created_at + interval '10 days' end,
      r.created_at + interval '3 hours', r.created_at + interval '3 hours'
    from load_requests r
    join quotes q on q.id = md5('load-quote-' || r.g)::uuid
    join requests rq on rq.id = q.request_id
    where r.state = 'awarded'`);
  await c.query(`
    insert into order_events (order_id, from_state, to_state, note, created_at)
    select id, null::order_state, 'awaiting_payment'::order_state, 'Order placed', created_at from orders where id in (select md5('load-order-' || g)::uuid from load_requests where state = 'awarded')
    union all
    select id, 'awaiting_payment'::order_state, state, 'Seeded for the load run', updated_at from orders
    where state <> 'awaiting_payment' and id in (select md5('load-order-' || g)::uuid from load_requests where state = 'awarded')`);
}

async function counts(c: pg.ClientBase) {
  const r = await c.query<{ labs: number; requests: number; orders: number }>(
    `select (select count(*)::int from labs where vetting_state = 'approved') as labs, (select count(*)::int from requests) as requests, (select count(*)::int from orders) as orders`,
  );
  return r.rows[0];
}

/** The load database, created, migrated and seeded when missing; reused as it is otherwise. Returns its URL. */
export async function ensureLoadDatabase({ log = console.log } = {}) {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    const exists = await admin.query("select 1 from pg_database where datname = $1", [LOAD_DB]);
    if (exists.rowCount === 0) {
      const template = await admin.query("select 1 from pg_database where datname = $1", [TEMPLATE_DB]);
      await admin.query(`create database ${LOAD_DB}${template.rowCount ? ` template ${TEMPLATE_DB}` : ""}`);
    }
  } finally {
    await admin.end();
  }
  const url = databaseUrl(LOAD_DB);
  await migrateDatabase(url);
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    const have = await counts(c);
    if (have.labs >= LOAD.labs && have.requests >= LOAD.requests && have.orders >= LOAD.orders) {
      log(`load database reused: ${have.labs} approved labs, ${have.requests} requests, ${have.orders} orders`);
      return url;
    }
    if (have.labs || have.requests) throw new Error(`${LOAD_DB} holds partial data (${JSON.stringify(have)}); drop it and run again`);
    const t0 = performance.now();
    await c.query("begin");
    await seedSyntheticLabs(c, LOAD.labs, { prefix: "Load Lab" });
    await seedMarket(c);
    await c.query("commit");
    await c.query("vacuum analyze");
    const now = await counts(c);
    log(`load database seeded in ${((performance.now() - t0) / 1000).toFixed(1)} s: ${now.labs} approved labs, ${now.requests} requests, ${now.orders} orders`);
    return url;
  } finally {
    await c.end();
  }
}

if (isMain(import.meta.url)) {
  const { servicesUp } = await import("../services/up");
  await servicesUp({ quiet: true });
  if (process.argv.includes("--fresh")) {
    const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
    await admin.connect();
    await admin.query(`drop database if exists ${LOAD_DB} with (force)`);
    await admin.end();
  }
  await ensureLoadDatabase();
}
