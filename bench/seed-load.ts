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

/**
 * LOAD_SCALE multiplies every row count (1 by default; 4 and 16 for the growth table, or 0.25 and 0.0625 where
 * the larger ones take too long to seed). Each scale has its own database: diffractory_load, diffractory_load_x4,
 * diffractory_load_x0_25 …
 */
export const LOAD_SCALE = Number(process.env.LOAD_SCALE ?? 1);
export const loadDbName = (scale: number) => (scale === 1 ? "diffractory_load" : `diffractory_load_x${String(scale).replace(".", "_")}`);
export const LOAD_DB = loadDbName(LOAD_SCALE);
/** Marks a load database seeded by this seed; one seeded by an older seed is seeded again. */
const SEED_VERSION = "load seed 3: the same labs every seeding";
const scaled = (n: number, scale = LOAD_SCALE) => Math.max(1, Math.round(n * scale));
export const loadSizes = (scale: number) => ({
  labs: scaled(5000, scale),
  clients: scaled(400, scale),
  requests: scaled(50_000, scale),
  /** Requests of the first client organisation, the one whose pages are measured. */
  bigClientRequests: scaled(2500, scale),
  orders: scaled(20_000, scale),
  /** Materials of the first client organisation (the others have two each), and lots per material. */
  bigClientMaterials: scaled(40, scale),
  lotsPerMaterial: 25,
  auditEntries: scaled(50_000, scale),
});
export const LOAD = {
  ...loadSizes(LOAD_SCALE),
  /** Every seeded person signs in with this password (clients load-owner-N@load.example). */
  password: "load-bench-password",
  ownerEmail: (n: number) => `load-owner-${n}@load.example`,
  /** The owner of the first lab ("Load Lab 1"), which quotes for half of the first client's requests. */
  labOwnerEmail: "load-lab-owner@load.example",
  /** A platform admin. */
  adminEmail: "load-admin@load.example",
};

/**
 * Approved labs with two instruments each, a stage per instrument, a price list, and hazard acceptance for a
 * quarter of them. With `someApplied`, every lab whose number ends in 7 is still awaiting vetting.
 */
/** The lab's number, from the end of its slug (load-lab-1 → 1), as SQL over organisations `o`. */
const labNo = "substring(o.slug from '[0-9]+$')::int";

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
        (array['powder_reflection','powder_transmission','thin_film'])[1 + ((k - 1 + ((${labNo} + 1) & 1)) % 3)]::technique,
        (array[${ANODES.map((a) => `'${a}'`).join(",")}])[1 + ((${labNo} + 1 + k) % ${ANODES.length})]::anode,
        'k_alpha_doublet', 5, 120 + (k * 10), 0.01, 'strip_1d', k % 2 = 0, '{powder}'
      from l join o on o.id = l.organisation_id, generate_series(1, 2) k
      returning id, lab_id, name
    )
    -- From the lab's number and hashes of its slug, not of random ids: every seeding gives each lab the same
    -- instruments, stages, prices and hazard acceptance, so the pages the benches view hold the same rows from one
    -- database to the next; lab 1 (the load lab owner's) measures powder reflection with Cu Kα and accepts hazards.
    insert into sample_stages (instrument_id, name, min_temperature_k, max_temperature_k, atmospheres)
    select i.id, 'Stage', 80 + (hashtext(o.slug || i.name) & 200), 400 + (hashtext(o.slug || i.name) & 1023), '{air,nitrogen}'
    from i join o on o.id = i.lab_id`,
    [n, prefix, slugPrefix, description, someApplied],
  );
  await c.query(
    `insert into price_lists (lab_id, currency, per_sample_minor, turnaround_days)
    select organisation_id, 'EUR', jsonb_build_object('powder_reflection', 9000 + (hashtext(o.slug) & 16383), 'powder_transmission', 12000 + (hashtext(o.slug) & 8191)), 3 + (hashtext(o.slug) & 15)
    from labs join organisations o on o.id = labs.organisation_id where description = $1`,
    [description],
  );
  await c.query(
    `insert into hazard_acceptance (lab_id, pictograms, special_categories)
    select organisation_id, '{GHS06,GHS07,GHS08}', '{nanomaterial}' from labs join organisations o on o.id = labs.organisation_id
    where description = $1 and (${labNo} & 3) = 1`,
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
     select g, case when g <= $2 then 1 else 2 + (g % greatest($3 - 1, 1)) end as client,
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
  await c.query("analyze organisations, memberships, requests, samples, load_requests, load_labs");
  await c.query(
    `insert into quotes (id, request_id, lab_id, state, line_items, total_minor, currency, valid_until, turnaround_days, created_at, decided_at)
     select md5('load-quote-' || r.g)::uuid, md5('load-request-' || r.g)::uuid, ll.id,
       case when r.state = 'awarded' then 'accepted' else 'sent' end::quote_state,
       jsonb_build_array(jsonb_build_object('description', 'Measurement', 'quantity', 1, 'unitMinor', 18000, 'totalMinor', 18000)),
       18000, 'EUR', r.created_at + interval '14 days', 10, r.created_at + interval '2 hours',
       case when r.state = 'awarded' then r.created_at + interval '3 hours' end
     from load_requests r join load_labs ll on ll.n = case when r.client = 1 and r.g % 2 = 0 then 0 else r.g % $1 end
     where r.state = 'awarded' or (r.state = 'open' and r.g % 10 = 2)`,
    [LOAD.labs],
  );
  await c.query("analyze quotes");
  const states = ORDER_STATES.map((s) => `'${s}'`).join(",");
  const delivered = ["data_delivered", "accepted", "paid_out", "disputed", "resolved"].map((s) => `'${s}'`).join(",");
  await c.query(`
    insert into orders (id, request_id, quote_id, client_organisation_id, lab_id, number, state, amount_minor, currency, delivered_at, created_at, updated_at)
    select md5('load-order-' || r.g)::uuid, q.request_id, q.id, rq.organisation_id, q.lab_id, 'LD' || r.client || '-2026-' || lpad(r.g::text, 7, '0'),
      (array[${states}])[1 + (r.g / 5) % ${ORDER_STATES.length}]::order_state, q.total_minor, q.currency,
      case when (array[${states}])[1 + (r.g / 5) % ${ORDER_STATES.length}] in (${delivered}) then r.created_at + interval '10 days' end,
      r.created_at + interval '3 hours', r.created_at + interval '3 hours'
    from load_requests r
    join quotes q on q.id = md5('load-quote-' || r.g)::uuid
    join requests rq on rq.id = q.request_id
    where r.state = 'awarded'`);
  await c.query("analyze orders");
  await c.query(`
    insert into order_events (order_id, from_state, to_state, note, created_at)
    select id, null::order_state, 'awaiting_payment'::order_state, 'Order placed', created_at from orders where id in (select md5('load-order-' || g)::uuid from load_requests where state = 'awarded')
    union all
    select id, 'awaiting_payment'::order_state, state, 'Seeded for the load run', updated_at from orders
    where state <> 'awaiting_payment' and id in (select md5('load-order-' || g)::uuid from load_requests where state = 'awarded')`);
  await seedNewerRows(c, hash);
}

/**
 * The rows the newer pages read: a lab owner and an admin; a payment per order and the ledger behind it
 * (money held, payouts and fees for paid-out orders); disputes; an invoice per paid order; messages on every
 * order and quoted request; a scan with its check on every delivered order; materials with lots, standing
 * agreements; and audit-log entries.
 */
async function seedNewerRows(c: pg.ClientBase, hash: string) {
  // Fresh statistics inside the transaction, or the planner takes the new tables for empty and nests its loops.
  await c.query("analyze organisations, memberships, requests, samples, quotes, orders, load_labs");
  await c.query(`insert into users (email, name, password_hash, is_admin) values ($1, 'Load Lab Owner', $3, false), ($2, 'Load Admin', $3, true)`, [
    LOAD.labOwnerEmail,
    LOAD.adminEmail,
    hash,
  ]);
  await c.query(
    `insert into memberships (user_id, organisation_id, role) select u.id, ll.id, 'owner' from users u, load_labs ll where u.email = $1 and ll.n = 0`,
    [LOAD.labOwnerEmail],
  );
  await c.query(`
    insert into payments (order_id, method, status, amount_minor, received_minor, currency, payment_intent_id, created_at, updated_at)
    select id, 'card', case when state = 'awaiting_payment' then 'open' else 'paid' end::payment_status, amount_minor,
      case when state = 'awaiting_payment' then 0 else amount_minor end, currency, 'pi_load_' || md5(id::text), created_at, created_at + interval '1 hour'
    from orders`);
  // Money held for every paid order; a payout (the amount less 8 %) and its fee for the paid-out ones.
  await c.query(`
    create temporary table load_tx on commit drop as
    select o.id as order_id, o.amount_minor as amount, o.currency, o.state, o.created_at,
      md5('held-' || o.id)::uuid as held_id, md5('payout-' || o.id)::uuid as payout_id, md5('fee-' || o.id)::uuid as fee_id,
      (o.amount_minor * 8 / 100) as fee
    from orders o where o.state <> 'awaiting_payment'`);
  await c.query(`
    insert into ledger_transactions (id, kind, order_id, currency, provider_object_id, memo, created_at)
    select held_id, 'payment_held'::ledger_kind, order_id, currency, 'ch_' || order_id, 'Payment held', created_at + interval '1 hour' from load_tx
    union all
    select payout_id, 'payout'::ledger_kind, order_id, currency, 'tr_' || order_id, 'Payout', created_at + interval '12 days' from load_tx where state = 'paid_out'
    union all
    select fee_id, 'platform_fee'::ledger_kind, order_id, currency, 'fee:tr_' || order_id, 'Platform fee', created_at + interval '12 days' from load_tx where state = 'paid_out'`);
  await c.query(`
    insert into ledger_entries (transaction_id, account, amount_minor, currency)
    select held_id, 'platform_cash', amount, currency from load_tx
    union all select held_id, 'funds_held', -amount, currency from load_tx
    union all select payout_id, 'funds_held', amount - fee, currency from load_tx where state = 'paid_out'
    union all select payout_id, 'platform_cash', -(amount - fee), currency from load_tx where state = 'paid_out'
    union all select fee_id, 'funds_held', fee, currency from load_tx where state = 'paid_out'
    union all select fee_id, 'platform_fees', -fee, currency from load_tx where state = 'paid_out'`);
  await c.query(`
    insert into disputes (order_id, state, opened_by, reason, created_at, refund_minor, payout_minor, decided_at, decision_reason)
    select o.id, case when o.state = 'resolved' then 'resolved' else 'open' end::dispute_state, m.user_id,
      'The scan does not cover the range asked for.', o.delivered_at + interval '2 days',
      case when o.state = 'resolved' then o.amount_minor / 2 end, case when o.state = 'resolved' then o.amount_minor / 2 end,
      case when o.state = 'resolved' then o.delivered_at + interval '5 days' end, case when o.state = 'resolved' then 'Split evenly.' end
    from orders o join memberships m on m.organisation_id = o.client_organisation_id
    where o.state in ('disputed', 'resolved')`);
  await c.query(`
    insert into invoices (kind, number, series, seq, issuer_organisation_id, recipient_organisation_id, order_id, currency, net_minor, tax_minor, total_minor, document, source_key, created_at)
    select 'invoice', 'INV-LD-' || lpad(row_number() over (order by o.created_at)::text, 7, '0'), 'INV-LD', row_number() over (order by o.created_at),
      o.lab_id, o.client_organisation_id, o.id, o.currency, o.amount_minor, 0, o.amount_minor,
      jsonb_build_object('kind', 'invoice', 'number', 'INV-LD-' || lpad(row_number() over (order by o.created_at)::text, 7, '0'),
        'issueDate', to_char(o.created_at + interval '1 hour', 'YYYY-MM-DD'), 'supplyDate', null, 'currency', o.currency,
        'seller', jsonb_build_object('name', lo.name, 'address', jsonb_build_array(lo.city, lo.country), 'taxId', null),
        'buyer', jsonb_build_object('name', co.name, 'address', jsonb_build_array(co.city, co.country), 'taxId', null),
        'issuedOnBehalfBy', null, 'orderNumber', o.number, 'purchaseOrderNumber', null, 'creditsInvoice', null, 'period', null,
        'lines', jsonb_build_array(jsonb_build_object('description', 'Measurement', 'quantity', 1, 'unitMinor', o.amount_minor, 'netMinor', o.amount_minor, 'rateBps', 0, 'taxMinor', 0)),
        'taxPerRate', jsonb_build_array(jsonb_build_object('rateBps', 0, 'netMinor', o.amount_minor, 'taxMinor', 0)),
        'totals', jsonb_build_object('netMinor', o.amount_minor, 'taxMinor', 0, 'grossMinor', o.amount_minor),
        'treatment', 'outside_scope', 'notes', '[]'::jsonb),
      'payment:' || o.id, o.created_at + interval '1 hour'
    from orders o join organisations lo on lo.id = o.lab_id join organisations co on co.id = o.client_organisation_id
    where o.state <> 'awaiting_payment'`);
  // Two messages on every order's thread and on every quoted open request's thread.
  await c.query(`
    insert into messages (request_id, lab_id, client_organisation_id, order_id, author_user_id, author_organisation_id, body, created_at)
    select o.request_id, o.lab_id, o.client_organisation_id, o.id, m.user_id, o.client_organisation_id, 'When do the samples need to arrive?', o.created_at + interval '1 hour'
    from orders o join memberships m on m.organisation_id = o.client_organisation_id
    union all
    select o.request_id, o.lab_id, o.client_organisation_id, o.id, null, o.lab_id, 'Any weekday before noon.', o.created_at + interval '2 hours' from orders o
    union all
    select q.request_id, q.lab_id, r.organisation_id, null, m.user_id, r.organisation_id, 'Can you measure down to 5 degrees?', q.created_at + interval '1 hour'
    from quotes q join requests r on r.id = q.request_id join memberships m on m.organisation_id = r.organisation_id where q.state = 'sent'
    union all
    select q.request_id, q.lab_id, r.organisation_id, null, null, q.lab_id, 'Yes, with the same instrument.', q.created_at + interval '2 hours'
    from quotes q join requests r on r.id = q.request_id where q.state = 'sent'`);
  // A stored scan with a finished check on every delivered order.
  await c.query(`
    insert into order_files (id, order_id, sample_id, kind, name, version, size_bytes, content_type, sha256, storage_key, state, scan_format, created_at, stored_at)
    select md5('file-' || o.id)::uuid, o.id, s.id, 'scan', 'S1.xy', 1, 1200000, 'text/plain', md5(o.id::text) || md5(o.id::text), 'load/' || o.id || '/S1.xy', 'stored', 'xy',
      o.delivered_at, o.delivered_at
    from orders o join samples s on s.request_id = o.request_id and s.position = 0
    where o.delivered_at is not null`);
  await c.query("analyze orders, payments, ledger_transactions, invoices, messages, order_files");
  await c.query(`
    insert into scan_checks (file_id, status, verdict, attempts, created_at, started_at, finished_at)
    select id, 'done', (array['consistent', 'review', 'inconsistent'])[1 + (hashtext(id::text) & 65535) % 3], 1, stored_at, stored_at, stored_at + interval '2 seconds'
    from order_files where storage_key like 'load/%'`);
  // Materials: the first client holds bigClientMaterials, every other two; each with lotsPerMaterial lots.
  await c.query(
    `insert into materials (organisation_id, product_code, name, formula, expected_phase, crystal_system, centering, cell_a, cell_b, cell_c, cell_alpha, cell_beta, cell_gamma, acceptance_window, created_at)
     select o.id, 'P-' || lpad(k::text, 5, '0'), 'Load material ' || k, 'TiO2', 'Anatase', 'tetragonal', 'I', 3.785, 3.785, 9.514, 90, 90, 90,
       '{"a": {"min": 3.78, "max": 3.79}}'::jsonb, now() - interval '400 days'
     from organisations o, generate_series(1, case when o.slug = 'load-client-1' then $1 else 2 end) k
     where o.slug like 'load-client-%'`,
    [LOAD.bigClientMaterials],
  );
  await c.query(
    `insert into material_lots (material_id, lot_code, measured_at, cell, verdict, within_window, created_at)
     select m.id, 'L' || lpad(k::text, 4, '0'), m.created_at + k * interval '7 days',
       jsonb_build_object('a', 3.785 + (k % 7) * 0.0004, 'b', 3.785 + (k % 7) * 0.0004, 'c', 9.514, 'alpha', 90, 'beta', 90, 'gamma', 90),
       'consistent', (k % 11) <> 0, m.created_at + k * interval '7 days'
     from materials m, generate_series(1, $1) k`,
    [LOAD.lotsPerMaterial],
  );
  // Standing agreements of the first client with the first lab, on its first ten materials.
  await c.query(`
    insert into standing_agreements (number, client_organisation_id, lab_id, material_id, line_items, price_per_lot_minor, currency, turnaround_days, starts_on, ends_on, budget_cap_minor, state, agreed_at)
    select 'SA-LD-2026-' || row_number() over (order by m.product_code), m.organisation_id, ll.id, m.id,
      jsonb_build_array(jsonb_build_object('description', 'Measurement', 'quantity', 1, 'unitMinor', 15000, 'totalMinor', 15000)),
      15000, 'EUR', 10, current_date - 100, current_date + 265, 300000, 'active', now() - interval '100 days'
    from materials m join organisations o on o.id = m.organisation_id and o.slug = 'load-client-1', load_labs ll
    where ll.n = 0 and m.product_code <= 'P-00010'`);
  await c.query(
    `insert into audit_log (at, actor_user_id, organisation_id, action, subject_type, subject_id, details)
     select now() - g * interval '3 minutes', m.user_id, m.organisation_id,
       (array['request_published', 'quote_accepted', 'profile_saved', 'password_changed'])[1 + g % 4], 'request', md5('load-request-' || g), '{}'::jsonb
     from generate_series(1, $1) g join memberships m on m.organisation_id = (select id from organisations where slug = 'load-client-' || (1 + g % $2))`,
    [LOAD.auditEntries, LOAD.clients],
  );
}

async function counts(c: pg.ClientBase) {
  const r = await c.query<{ labs: number; requests: number; orders: number; messages: number; invoices: number; lots: number }>(
    `select (select count(*)::int from labs where vetting_state = 'approved') as labs, (select count(*)::int from requests) as requests,
       (select count(*)::int from orders) as orders, (select count(*)::int from messages) as messages, (select count(*)::int from invoices) as invoices,
       (select count(*)::int from material_lots) as lots`,
  );
  return r.rows[0];
}

/** The load database, created, migrated and seeded when missing; reused as it is otherwise. Returns its URL. */
export async function ensureLoadDatabase({ log = console.log } = {}): Promise<string> {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    if (await seededBeforeNewerRows()) {
      log(`${LOAD_DB} was seeded by an older seed (${SEED_VERSION} is current): seeding it again`);
      await admin.query(`drop database ${LOAD_DB} with (force)`);
    }
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
      log(`${LOAD_DB} reused: ${describe(have)}`);
      return url;
    }
    if (have.labs || have.requests) throw new Error(`${LOAD_DB} holds partial data (${JSON.stringify(have)}); drop it and run again`);
    const t0 = performance.now();
    await c.query("begin");
    await seedSyntheticLabs(c, LOAD.labs, { prefix: "Load Lab" });
    await seedMarket(c);
    await c.query("commit");
    await c.query(`comment on database ${LOAD_DB} is '${SEED_VERSION}'`);
    await c.query("vacuum analyze");
    const now = await counts(c);
    log(`${LOAD_DB} seeded in ${((performance.now() - t0) / 1000).toFixed(1)} s: ${describe(now)}`);
    return url;
  } finally {
    await c.end();
  }
}

const describe = (n: Awaited<ReturnType<typeof counts>>) =>
  `${n.labs} approved labs, ${n.requests} requests, ${n.orders} orders, ${n.messages} messages, ${n.invoices} invoices, ${n.lots} material lots`;

/** A load database seeded by an older version of this file: orders but no messages. */
async function seededBeforeNewerRows() {
  const c = new pg.Client({ connectionString: databaseUrl(LOAD_DB) });
  try {
    await c.connect();
  } catch {
    return false; // no such database yet
  }
  try {
    const r = await c.query<{ old: boolean }>(
      // Seeded before messages were, or before the seed gave each lab the same instruments every time (SEED_VERSION).
      `select to_regclass('messages') is not null and (select count(*) from orders) > 0
         and (not exists (select 1 from messages) or coalesce(shobj_description((select oid from pg_database where datname = current_database()), 'pg_database'), '') <> $1) as old`,
      [SEED_VERSION],
    );
    return r.rows[0].old;
  } catch {
    return false;
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
