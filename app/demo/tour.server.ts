// The short tour `npm run demo` prints at the end: per demo account, what to look at and where, with the
// seeded rows' own URLs (README "Demo tour" has the same tour without the ids).
import { and, eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { requestLifeIds } from "~/demo/seed-request-life.server";
import { transferDemoIds } from "~/demo/seed-transfer.server";
import { TIER_REQUEST_TITLE } from "~/demo/seed-tiers.server";
import { TREND_DEMO_PRODUCT_CODE, TREND_DEMO_SOURCE_TITLE } from "~/demo/seed-trends.server";

export async function requestId(title: string) {
  const [row] = await db.select({ id: schema.requests.id }).from(schema.requests).where(eq(schema.requests.title, title));
  return row?.id ?? "";
}

export async function orderId(title: string) {
  const [row] = await db
    .select({ id: schema.orders.id })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .where(eq(schema.requests.title, title));
  return row?.id ?? "";
}

export async function materialId(productCode: string) {
  const [row] = await db.select({ id: schema.materials.id }).from(schema.materials).where(eq(schema.materials.productCode, productCode));
  return row?.id ?? "";
}

/** The standing agreement of the demo's material (the cathode grade's, with Granite Ridge). */
export async function agreementId(productCode: string) {
  const [row] = await db
    .select({ id: schema.standingAgreements.id })
    .from(schema.standingAgreements)
    .innerJoin(schema.materials, eq(schema.materials.id, schema.standingAgreements.materialId))
    .where(eq(schema.materials.productCode, productCode));
  return row?.id ?? "";
}

export async function instrumentId(name: string) {
  const [row] = await db.select({ id: schema.instruments.id }).from(schema.instruments).where(eq(schema.instruments.name, name));
  return row?.id ?? "";
}

/** The check of the order's scan with this file name. */
export async function checkId(fileName: string) {
  const [row] = await db
    .select({ id: schema.scanChecks.id })
    .from(schema.scanChecks)
    .innerJoin(schema.orderFiles, eq(schema.orderFiles.id, schema.scanChecks.fileId))
    .where(and(eq(schema.orderFiles.name, fileName), eq(schema.orderFiles.version, 1)));
  return row?.id ?? "";
}

export async function demoTour(base: string) {
  const [meridian] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.slug, "meridian-analytical"));
  const u = (path: string) => `${base}${path}`;
  const life = await requestLifeIds();
  const transfer = await transferDemoIds();
  const lines = [
    "Tour (password diffractory-demo for every account):",
    "owner@halvorsen.example — Ingrid, client owner",
    `  fluorescence warning on an iron phosphate under copper: ${u(`/client/requests/${await requestId("Phase check of LFP cathode batch HC-2611")}`)}`,
    `  two quotes side by side (Granite Ridge, Lakeside), accept one and pay: ${u(`/client/requests/${await requestId("Phase purity of NMC811 lot HC-2634")}`)}`,
    `  the same quotes in EUR and USD, each saying so, with an indicative conversion at the admin's demo rate (admin: ${u("/admin/rates")}); owner@pinecrest.example buys against purchase orders — each order shows its PO number, e.g. ${u(`/client/orders/${await orderId("Cryostat scan of hydrate PSF-131")}`)} (add or correct it until paid)`,
    `  messages: Granite Ridge's question before quoting and the answer (same request, "Questions from labs"); the order's thread with the lab: ${u(`/client/orders/${await orderId("Lattice check of LFP production lot HC-2645")}#messages`)}`,
    `  data delivered, review window open — open the review check's plot, then accept: ${u(`/client/orders/${await orderId("Lattice check of LFP production lot HC-2645")}`)}  (check ${u(`/checks/${await checkId("HC-2645-2_Co_15-110.xy")}`)})`,
    `  open dispute: ${u(`/client/orders/${await orderId("Impurity check of NMC lot HC-2655")}`)}; every request state: ${u("/client/requests")}`,
    `  a declared Li3PO4 residue beside the olivine, both phases in its check: ${u(`/client/orders/${await orderId("Olivine with Li3PO4 residue in LFP batch HC-2681")}`)}  (check ${u(`/checks/${await checkId("HC-2681-A_Co_15-110.xy")}`)})`,
    `  a lot outside its ± 0.002 Å acceptance window: ${u(`/client/orders/${await orderId("Acceptance test of LFP production lot HC-2693")}`)}  (check ${u(`/checks/${await checkId("HC-2693-1_Co_15-110.xy")}`)})`,
    `  a request's life — edited after Granite Ridge quoted (its quote awaits re-confirmation): ${u(`/client/requests/${life.edited}`)}; withdrawn, with “Order again”: ${u(`/client/requests/${life.withdrawn}`)}; expired by the job: ${u(`/client/requests/${life.expired}`)}`,
    `  delivered data cannot be deleted for five years: an archived scan, brought back under "Show archived": ${u(`/client/data-room/${await orderId("Lattice check of LFP reference lot HC-2398")}?archived=1`)}`,
    `  the olivine grade ${TREND_DEMO_PRODUCT_CODE} as a material, declared once, its lots on record: ${u(`/client/materials/${await materialId(TREND_DEMO_PRODUCT_CODE)}`)}; its trend — 23 lots over eleven months on a control chart, the a axis creeping upwards until lot C20-2523 breaks rule 2 (member@halvorsen.example, its QC person, was told, in the app and by e-mail): ${u(`/client/materials/${await materialId(TREND_DEMO_PRODUCT_CODE)}/trend?parameter=a`)}; the CSV beside it and ${u(`/api/materials/${await materialId(TREND_DEMO_PRODUCT_CODE)}/trend`)}`,
    `  the standing agreement with Granite Ridge for that grade, proposed from the accepted quote of "${TREND_DEMO_SOURCE_TITLE}" and agreed by the lab: every lot an order without quotes, with lots used, money spent and what remains of the cap, and "Order a lot": ${u(`/client/agreements/${await agreementId(TREND_DEMO_PRODUCT_CODE)}`)} (all: ${u("/client/agreements")})`,
    `  the profile: legal name, billing address, tax id, kind (confirmed), dispatch address: ${u("/client/profile")}; the packing slip with Granite Ridge's sample reception and a parcel label: ${u(`/client/orders/${await orderId("Lattice check of LFP production lot HC-2645")}/packing-slip`)}`,
    "owner@pinecrest.example — Amara, client owner (member@pinecrest.example is a member; consultant@fieldnotes.example manages for both clients)",
    `  paying by bank transfer: bank details, reference and PO number, with a part received and the date it must arrive by: ${u(`/client/orders/${transfer.partial}`)}; paid in full by transfer, money held: ${u(`/client/orders/${transfer.paid}`)}`,
    `  nanomaterial and toxic samples with their safety data sheets, in transit: ${u(`/client/orders/${await orderId("Polymorph screen of nano-milled API PSF-152")}`)}`,
    `  refused on arrival, with the lab's reason and the refund: ${u(`/client/orders/${await orderId("Capillary series of solvate PSF-127")}`)}; inconsistent check of the resolved dispute: ${u(`/checks/${await checkId("PSF-118-B_Cu_5-60.xy")}`)}`,
    `  invoices and credit notes: the refused parcel's order has its invoice in Lakeside's name with the PO and the refund's credit note (PDF and JSON: ${u(`/api/orders/${await orderId("Capillary series of solvate PSF-127")}/invoice`)}); every paid order lists its invoice on the order page and the payment's receipt`,
    `  payments with their true state — paid, partly refunded (the refused parcel, less the handling fee) or refunded — and receipts that say so: ${u("/client/payments")}`,
    `  Form I declared with Form II as a candidate, the check picks the form the scan shows: ${u(`/client/orders/${await orderId("Form I or Form II of API batch PSF-163")}`)}  (check ${u(`/checks/${await checkId("PSF-163-B_Cu_5-60.xy")}`)})`,
    `consultant@fieldnotes.example — Rosalind, works for both clients: the bell shows the organisation she works in and counts the other's; a link into the other switches there with a notice: ${u(`/client/orders/${await orderId("Lattice check of LFP production lot HC-2645")}#messages`)}`,
    "lab@graniteridge.example — Marcus, lab manager (operator@graniteridge.example measures)",
    `  its question to the client before quoting, and the answer: ${u(`/lab/requests/${await requestId("Phase purity of NMC811 lot HC-2634")}#messages`)}`,
    `  a request changed after quoting — read the change and re-confirm the quote: ${u(`/lab/requests/${life.edited}`)}`,
    `  work queue: ${u("/lab/work-queue")}; the hazardous parcel on its way: ${u(`/lab/orders/${await orderId("Polymorph screen of nano-milled API PSF-152")}`)}`,
    `  measuring — upload scans and watch their checks: ${u(`/lab/orders/${await orderId("Form screen of salt candidates PSF-144")}/files`)}; payouts: ${u("/lab/payouts")}`,
    `  the lab's records — work queue sorted by due date: ${u("/lab/work-queue?sort=due&dir=asc")}; receipt record with storage places and a scan's entered conditions: ${u(`/lab/orders/${await orderId("Lattice check of LFP production lot HC-2645")}`)} (files: ${u(`/lab/orders/${await orderId("Lattice check of LFP production lot HC-2645")}/files`)})`,
    `  the same agreement from the lab's side, its 23 lots delivered (one late, as the on-time record shows): ${u(`/lab/agreements/${await agreementId(TREND_DEMO_PRODUCT_CODE)}`)}; the calibration record of an instrument — a year of monthly silicon scans, deviation, zero shift and profile width as control charts, a mild upward drift still in control, the next scan due: ${u(`/lab/instruments/${await instrumentId("Reflection diffractometer B (Co)")}/calibration`)}`,
    `  statements: last month's payouts order by order (paid, refunded, fee, net) as PDF and CSV, with the platform's fee invoice: ${u("/lab/statements")}`,
    "lab@lakeside.example — Dana, lab manager",
    `  quotes sent, declined and lapsed: ${u("/lab/quotes")}; samples received, to measure: ${u(`/lab/orders/${await orderId("Transmission scan of LFP coating trial HC-2624")}`)}`,
    `  price tiers: academic and non-profit prices beside the base list (${u("/lab/price-list")}, public at ${u("/labs/lakeside-institute-x-ray-core")}); the quote for owner@kestrelmoor.example's university group, confirmed as academic, drafts from the academic prices and says so: ${u(`/lab/requests/${await requestId(TIER_REQUEST_TITLE)}`)}`,
    `anyone, signed in or not — the directory with each instrument's measured accuracy (e.g. "Si: +0.00002 Å, 12 scans in 12 months") and each lab's on-time record: ${u("/labs")}; Granite Ridge's profile: ${u("/labs/granite-ridge-characterisation")}; the same figures in ${u("/api/labs")}`,
    `lab@meridian.example — Tiago, awaiting vetting: the application and its checked calibration scan: ${u("/lab/vetting")}`,
    "admin@diffractory.example — platform admin; the sign-in code: npx tsx scripts/demo-code.ts",
    `  kinds of client to confirm (Pinecrest states industry): ${u("/admin/users")}; Granite Ridge's receiving address: lab@graniteridge.example at ${u("/lab/profile")}`,
    `  Meridian's application with its calibration check: ${u(`/admin/labs/${meridian?.id ?? ""}`)}; disputes (one open, one resolved): ${u("/admin/disputes")}`,
    `  the open dispute with both statements, the lab's evidence, the files with their checks and plots (each read audit-logged): ${u(`/admin/disputes/${await orderId("Impurity check of NMC lot HC-2655")}`)}`,
    `  audit log in sentences, filtered by kind (files, money, disputes…) and person: ${u("/admin/audit-log?kind=files")}; sign-ins apart: ${u("/admin/audit-log?kind=sign_ins")}`,
    `  invoices, credit notes and fee invoices of a period with totals per currency, and its CSV: ${u("/admin/invoices")}`,
    `  ledger: ${u("/admin/ledger")}; audit log: ${u("/admin/audit-log")}; outbox: ${u("/admin/outbox")}; e-mail sent: ${u("/dev/mail")} (raw: http://127.0.0.1:54331/_fake/messages)`,
  ];
  return lines.join("\n");
}
