// The one Drizzle schema of Diffractory; drizzle-kit generates the SQL migrations in drizzle/ from it.
import { sql } from "drizzle-orm";
// The order states are defined once, with the state machine that moves between them.
import { ORDER_STATES } from "~/domain/order-states";
import type { MeasurementConditions, ScanInfo } from "~/domain/measurement";
import type { AcceptanceWindow } from "~/diffraction/phases";
import type { InvoiceDocument, InvoiceKind } from "~/domain/invoice-document";
import {
  type AnyPgColumn,
  bigserial,
  boolean,
  check,
  date,
  doublePrecision,
  index,
  integer,
  jsonb,
  numeric,
  pgEnum,
  pgTable,
  primaryKey,
  real,
  text,
  timestamp,
  unique,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";

export const organisationKind = pgEnum("organisation_kind", ["client", "lab"]);
/** Client organisations have owners and members; labs have managers and operators (docs/design.md#roles). */
export const membershipRole = pgEnum("membership_role", ["owner", "member", "manager", "operator"]);

const createdAt = () => timestamp("created_at", { withTimezone: true }).notNull().defaultNow();

export const users = pgTable(
  "users",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    email: text("email").notNull(),
    name: text("name").notNull(),
    passwordHash: text("password_hash").notNull(),
    isAdmin: boolean("is_admin").notNull().default(false),
    passwordChangedAt: timestamp("password_changed_at", { withTimezone: true }).notNull().defaultNow(),
    /** Base32 TOTP secret (RFC 6238); set while enrolling, in force once totpEnabledAt is set. */
    totpSecret: text("totp_secret"),
    totpEnabledAt: timestamp("totp_enabled_at", { withTimezone: true }),
    /** The last accepted time step: a code of that step or an earlier one is refused (RFC 6238 §5.2). */
    totpLastStep: integer("totp_last_step"),
    /** Optional notices collected into one e-mail a day instead of one e-mail each. */
    dailyDigest: boolean("daily_digest").notNull().default(false),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("users_email_lower_idx").on(sql`lower(${t.email})`)],
);

export const organisations = pgTable(
  "organisations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    kind: organisationKind("kind").notNull(),
    name: text("name").notNull(),
    slug: text("slug").notNull(),
    city: text("city"),
    country: text("country"),
    /** The letters that start its order numbers (HCW in HCW-2026-0042), from the name's initials; set at its first order. */
    orderPrefix: text("order_prefix"),
    /** The name on invoices and contracts, when it differs from the name people use. */
    legalName: text("legal_name"),
    billingAddress: jsonb("billing_address").$type<PostalAddress>(),
    /** A VAT number (EU formats checked per country) or another country's tax id as given. */
    taxId: text("tax_id"),
    invoiceEmail: text("invoice_email"),
    /** A client's kind for a lab's price tiers: "academic", "non_profit" or "industry"; an admin confirms it. */
    clientKind: text("client_kind"),
    clientKindConfirmedAt: timestamp("client_kind_confirmed_at", { withTimezone: true }),
    clientKindConfirmedBy: uuid("client_kind_confirmed_by"),
    /** The client's procurement needs a purchase-order number on every accepted quote. */
    requiresPurchaseOrder: boolean("requires_purchase_order").notNull().default(false),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("organisations_slug_idx").on(t.slug),
    index("organisations_kind_idx").on(t.kind),
    uniqueIndex("organisations_order_prefix_idx").on(t.orderPrefix),
  ],
);

/** A postal address as written on a parcel or an invoice; `country` is the ISO 3166-1 alpha-2 code. */
export interface PostalAddress {
  line1: string;
  line2?: string | null;
  postcode?: string | null;
  city: string;
  region?: string | null;
  country: string;
}

/** Where an organisation receives or sends parcels, with who takes them and when. */
export const organisationAddresses = pgTable(
  "organisation_addresses",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    /** "receiving" (parcels come here: a lab's sample reception) or "shipping" (parcels leave from here). */
    kind: text("kind").$type<"receiving" | "shipping">().notNull(),
    label: text("label").notNull(),
    address: jsonb("address").$type<PostalAddress>().notNull(),
    contactName: text("contact_name").notNull().default(""),
    contactPhone: text("contact_phone").notNull().default(""),
    /** When parcels are taken in, in words ("Mon–Fri 08:00–16:00, closed on public holidays"). */
    openingHours: text("opening_hours").notNull().default(""),
    isDefault: boolean("is_default").notNull().default(false),
    createdAt: createdAt(),
  },
  (t) => [index("organisation_addresses_org_idx").on(t.organisationId), check("organisation_addresses_kind", sql`${t.kind} in ('receiving', 'shipping')`)],
);

export const memberships = pgTable(
  "memberships",
  {
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    role: membershipRole("role").notNull(),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.organisationId] }), index("memberships_org_idx").on(t.organisationId)],
);

/** An invitation to join an organisation, sent by e-mail; the link carries a random token, the table keeps only its SHA-256. */
export const organisationInvitations = pgTable(
  "organisation_invitations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    role: membershipRole("role").notNull(),
    tokenHash: text("token_hash").notNull(),
    invitedBy: uuid("invited_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    acceptedAt: timestamp("accepted_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("organisation_invitations_token_idx").on(t.tokenHash), index("organisation_invitations_org_idx").on(t.organisationId)],
);

/** Server-side sessions: the cookie carries a random token, the table keeps only its SHA-256. */
export const sessions = pgTable(
  "sessions",
  {
    id: text("id").primaryKey(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    activeOrganisationId: uuid("active_organisation_id").references(() => organisations.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    /** Password accepted, second-factor code not yet: only the code screen accepts such a session. */
    awaitingSecondFactor: boolean("awaiting_second_factor").notNull().default(false),
    secondFactorFailures: integer("second_factor_failures").notNull().default(0),
    createdAt: createdAt(),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

/** A password-reset link sent by e-mail: the link carries a random token, the table keeps only its SHA-256. */
export const passwordResetTokens = pgTable(
  "password_reset_tokens",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull(),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("password_reset_tokens_token_idx").on(t.tokenHash), index("password_reset_tokens_user_idx").on(t.userId)],
);

export const signInAttempts = pgTable(
  "sign_in_attempts",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    email: text("email").notNull(),
    clientAddress: text("client_address").notNull(),
    succeeded: boolean("succeeded").notNull(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("sign_in_attempts_email_at_idx").on(t.email, t.at), index("sign_in_attempts_address_at_idx").on(t.clientAddress, t.at)],
);

export const auditLog = pgTable(
  "audit_log",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    at: timestamp("at", { withTimezone: true }).notNull().defaultNow(),
    actorUserId: uuid("actor_user_id").references(() => users.id, { onDelete: "set null" }),
    organisationId: uuid("organisation_id").references(() => organisations.id, { onDelete: "set null" }),
    action: text("action").notNull(),
    subjectType: text("subject_type"),
    subjectId: text("subject_id"),
    details: jsonb("details").$type<Record<string, unknown>>().notNull().default({}),
    clientAddress: text("client_address"),
  },
  (t) => [index("audit_log_at_idx").on(t.at), index("audit_log_org_idx").on(t.organisationId), index("audit_log_actor_idx").on(t.actorUserId, t.at)],
);

export type User = typeof users.$inferSelect;
export type Organisation = typeof organisations.$inferSelect;
export type Membership = typeof memberships.$inferSelect;
export type OrganisationInvitation = typeof organisationInvitations.$inferSelect;
export type PasswordResetToken = typeof passwordResetTokens.$inferSelect;
export type MembershipRole = (typeof membershipRole.enumValues)[number];
export type OrganisationKind = (typeof organisationKind.enumValues)[number];

// ───────────────────────── Marketplace: labs, capabilities, requests, samples, quotes, orders ─────────────────────────

export const vettingState = pgEnum("vetting_state", ["applied", "in_review", "approved", "rejected", "suspended"]);
export const technique = pgEnum("technique", ["powder_reflection", "powder_transmission", "thin_film", "single_crystal", "total_scattering", "neutron_powder"]);
export const anode = pgEnum("anode", ["Cr", "Fe", "Co", "Cu", "Mo", "Ag"]);
export const monochromation = pgEnum("monochromation", ["k_alpha_doublet", "k_alpha1_only", "k_beta_filtered"]);
export const detectorKind = pgEnum("detector_kind", ["point", "strip_1d", "area_2d"]);
export const labDocumentKind = pgEnum("lab_document_kind", ["accreditation_certificate", "radiation_licence", "calibration_scan", "other"]);
export const requestState = pgEnum("request_state", ["draft", "open", "awarded", "expired", "withdrawn"]);
export const requestVisibility = pgEnum("request_visibility", ["open", "invited"]);
export const qualityLevel = pgEnum("quality_level", ["screening", "standard", "high_resolution"]);
export const quoteState = pgEnum("quote_state", ["sent", "accepted", "declined", "withdrawn", "lapsed"]);
export const orderState = pgEnum("order_state", ORDER_STATES);

const updatedAt = () => timestamp("updated_at", { withTimezone: true }).notNull().defaultNow();

/** A lab organisation's marketplace profile and vetting record (one per lab organisation). */
export const labs = pgTable(
  "labs",
  {
    organisationId: uuid("organisation_id")
      .primaryKey()
      .references(() => organisations.id, { onDelete: "cascade" }),
    description: text("description").notNull().default(""),
    vettingState: vettingState("vetting_state").notNull().default("applied"),
    accreditationNumber: text("accreditation_number"),
    accreditationExpiry: date("accreditation_expiry"),
    licenceAttestation: text("licence_attestation"),
    licenceAttestedBy: uuid("licence_attested_by").references(() => users.id, { onDelete: "set null" }),
    licenceAttestedAt: timestamp("licence_attested_at", { withTimezone: true }),
    calibrationStandard: text("calibration_standard"),
    calibrationCheck: jsonb("calibration_check").$type<Record<string, unknown>>(),
    reviewedBy: uuid("reviewed_by").references(() => users.id, { onDelete: "set null" }),
    reviewedAt: timestamp("reviewed_at", { withTimezone: true }),
    reviewNote: text("review_note"),
    payoutAccountId: text("payout_account_id"),
    payoutsEnabled: boolean("payouts_enabled").notNull().default(false),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index("labs_vetting_state_idx").on(t.vettingState)],
);

/** Files a lab hands in for vetting; the bytes live in S3 under `storageKey`. */
export const labDocuments = pgTable(
  "lab_documents",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    kind: labDocumentKind("kind").notNull(),
    fileName: text("file_name").notNull(),
    contentType: text("content_type").notNull(),
    sizeBytes: integer("size_bytes").notNull(),
    storageKey: text("storage_key").notNull(),
    sha256: text("sha256"),
    uploadedBy: uuid("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    uploadedAt: createdAt(),
  },
  (t) => [index("lab_documents_lab_idx").on(t.labId)],
);

export const instruments = pgTable(
  "instruments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    name: text("name").notNull(),
    technique: technique("technique").notNull(),
    /** An anode of the reference table, or null with a custom wavelength (synchrotron, neutron). */
    anode: anode("anode"),
    customWavelength: doublePrecision("custom_wavelength"),
    monochromation: monochromation("monochromation").notNull().default("k_alpha_doublet"),
    twoThetaMin: doublePrecision("two_theta_min").notNull(),
    twoThetaMax: doublePrecision("two_theta_max").notNull(),
    smallestStep: doublePrecision("smallest_step").notNull(),
    detector: detectorKind("detector").notNull(),
    energyDiscrimination: boolean("energy_discrimination").notNull().default(false),
    sampleForms: text("sample_forms").array().notNull().default(sql`'{}'::text[]`),
    /** The sample holder the lab measures on (a value of SAMPLE_HOLDERS); the check allows for its own lines. */
    sampleHolder: text("sample_holder"),
    /** Caglioti U, V, W (degrees² 2θ) of the instrument's peak widths, all three or none; they take the instrument's width out of the Scherrer sizes. */
    cagliotiU: doublePrecision("caglioti_u"),
    cagliotiV: doublePrecision("caglioti_v"),
    cagliotiW: doublePrecision("caglioti_w"),
    /** Where U, V, W came from, in words ("Entered by the lab", "Fitted to the calibration scan si.xy, 4 Dec 2026"). */
    profileSource: text("profile_source"),
    /** How often the lab repeats its calibration scan (docs/design.md#calibration-on-record); 30 days by default. */
    calibrationIntervalDays: integer("calibration_interval_days").notNull().default(30),
    /** The standard it calibrates with (a key of CALIBRATION_STANDARDS), set by its first calibration. */
    calibrationStandard: text("calibration_standard"),
    /** "none" (never calibrated here), "ok", "overdue" or "out_of_control"; overdue and out of control leave matching. */
    calibrationState: text("calibration_state").$type<"none" | "ok" | "overdue" | "out_of_control">().notNull().default("none"),
    calibrationDueAt: timestamp("calibration_due_at", { withTimezone: true }),
    active: boolean("active").notNull().default(true),
    createdAt: createdAt(),
  },
  (t) => [
    index("instruments_lab_idx").on(t.labId),
    index("instruments_anode_idx").on(t.anode),
    check("instruments_profile_whole", sql`(${t.cagliotiU} is null) = (${t.cagliotiV} is null) and (${t.cagliotiV} is null) = (${t.cagliotiW} is null)`),
  ],
);

export const sampleStages = pgTable(
  "sample_stages",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    instrumentId: uuid("instrument_id")
      .notNull()
      .references(() => instruments.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    minTemperatureK: real("min_temperature_k").notNull(),
    maxTemperatureK: real("max_temperature_k").notNull(),
    atmospheres: text("atmospheres").array().notNull().default(sql`'{}'::text[]`),
  },
  (t) => [index("sample_stages_instrument_idx").on(t.instrumentId)],
);

/** Per-lab prices in integer minor units of `currency`. */
export const priceLists = pgTable("price_lists", {
  labId: uuid("lab_id")
    .primaryKey()
    .references(() => labs.organisationId, { onDelete: "cascade" }),
  currency: text("currency").notNull().default("EUR"),
  perSampleMinor: jsonb("per_sample_minor").$type<Partial<Record<string, number>>>().notNull().default({}),
  perExtraTemperaturePointMinor: integer("per_extra_temperature_point_minor").notNull().default(0),
  perInstrumentHourMinor: integer("per_instrument_hour_minor").notNull().default(0),
  samplePreparationMinor: integer("sample_preparation_minor").notNull().default(0),
  hazardousHandlingMinor: integer("hazardous_handling_minor").notNull().default(0),
  rushMultiplier: numeric("rush_multiplier", { precision: 4, scale: 2 }).notNull().default("1.50"),
  turnaroundDays: integer("turnaround_days").notNull().default(10),
  /** Prices by client kind ("academic", "non_profit", "industry") where they differ from the list above. */
  tiers: jsonb("tiers").$type<Partial<Record<"academic" | "non_profit" | "industry", PriceTier>>>().notNull().default({}),
  updatedAt: updatedAt(),
});

/** A client kind's own prices; what it leaves out is taken from the base list. */
export interface PriceTier {
  perSampleMinor?: Partial<Record<string, number>>;
  perInstrumentHourMinor?: number;
}

export const hazardAcceptance = pgTable("hazard_acceptance", {
  labId: uuid("lab_id")
    .primaryKey()
    .references(() => labs.organisationId, { onDelete: "cascade" }),
  pictograms: text("pictograms").array().notNull().default(sql`'{}'::text[]`),
  specialCategories: text("special_categories").array().notNull().default(sql`'{}'::text[]`),
  updatedAt: updatedAt(),
});

export const requests = pgTable(
  "requests",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    title: text("title").notNull(),
    technique: technique("technique").notNull().default("powder_reflection"),
    state: requestState("state").notNull().default("draft"),
    /** The wizard step the draft was last saved at (samples, hazards, measurement, labs, review). */
    draftStep: text("draft_step").notNull().default("samples"),
    rangeKind: text("range_kind").notNull().default("two_theta"),
    rangeMin: doublePrecision("range_min"),
    rangeMax: doublePrecision("range_max"),
    preferredSource: text("preferred_source").notNull().default("any"),
    temperaturePointsK: doublePrecision("temperature_points_k").array().notNull().default(sql`'{}'::double precision[]`),
    atmosphere: text("atmosphere").notNull().default("air"),
    quality: qualityLevel("quality").notNull().default("standard"),
    deadline: date("deadline"),
    budgetMinor: integer("budget_minor"),
    currency: text("currency").notNull().default("EUR"),
    visibility: requestVisibility("visibility").notNull().default("open"),
    openedAt: timestamp("opened_at", { withTimezone: true }),
    /** Counts the client's edits after publishing; a quote answers one revision and lapses on the next unless re-confirmed. */
    revision: integer("revision").notNull().default(1),
    /** The request this one was copied from ("Order again"), if any. */
    repeatOf: uuid("repeat_of"),
    /** When the client withdrew it or the expiry job closed it on its deadline. */
    closedAt: timestamp("closed_at", { withTimezone: true }),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  // The client's requests list pages through (organisation, state, newest first).
  (t) => [index("requests_org_state_created_idx").on(t.organisationId, t.state, t.createdAt.desc()), index("requests_state_idx").on(t.state)],
);

export const requestInvitations = pgTable(
  "request_invitations",
  {
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.requestId, t.labId] })],
);

export interface SpecialHazard {
  category: string;
  details: string;
  activityBq?: number | null;
}

export const samples = pgTable(
  "samples",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    position: integer("position").notNull().default(0),
    label: text("label").notNull(),
    formula: text("formula").notNull(),
    elements: text("elements").array().notNull().default(sql`'{}'::text[]`),
    form: text("form").notNull().default("powder"),
    massMg: doublePrecision("mass_mg"),
    expectedPhase: text("expected_phase"),
    crystalSystem: text("crystal_system"),
    centering: text("centering"),
    cellA: doublePrecision("cell_a"),
    cellB: doublePrecision("cell_b"),
    cellC: doublePrecision("cell_c"),
    cellAlpha: doublePrecision("cell_alpha"),
    cellBeta: doublePrecision("cell_beta"),
    cellGamma: doublePrecision("cell_gamma"),
    /** The client's acceptance window on the main phase's cell (± Å/° or ± % per parameter), or null for none. */
    acceptanceWindow: jsonb("acceptance_window").$type<AcceptanceWindow>(),
    ghsPictograms: text("ghs_pictograms").array().notNull().default(sql`'{}'::text[]`),
    hStatements: text("h_statements").array().notNull().default(sql`'{}'::text[]`),
    specialHazards: jsonb("special_hazards").$type<SpecialHazard[]>().notNull().default([]),
    handlingNotes: text("handling_notes"),
    afterMeasurement: text("after_measurement").notNull().default("return"),
    sdsFileName: text("sds_file_name"),
    sdsStorageKey: text("sds_storage_key"),
    sdsSizeBytes: integer("sds_size_bytes"),
    /** The client's material this sample is a lot of (docs/design.md#materials-and-lots), and the lot's code. */
    materialId: uuid("material_id").references((): AnyPgColumn => materials.id, { onDelete: "set null" }),
    lotCode: text("lot_code"),
    createdAt: createdAt(),
  },
  (t) => [index("samples_request_idx").on(t.requestId), index("samples_material_idx").on(t.materialId)],
);

/**
 * A sample's further declared phases besides its main phase (the sample's own columns): further expected
 * phases (an impurity, a second component) and candidate forms (alternatives to the main phase, e.g. two
 * polymorphs), each with its system, centering and approximate cell (docs/decisions/012-phases-and-window.md).
 */
export const samplePhases = pgTable(
  "sample_phases",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    sampleId: uuid("sample_id")
      .notNull()
      .references(() => samples.id, { onDelete: "cascade" }),
    position: integer("position").notNull().default(0),
    /** "expected" (a further expected phase) or "candidate" (an alternative to the main phase). */
    role: text("role").$type<"expected" | "candidate">().notNull(),
    name: text("name"),
    crystalSystem: text("crystal_system").notNull(),
    centering: text("centering").notNull(),
    cellA: doublePrecision("cell_a").notNull(),
    cellB: doublePrecision("cell_b").notNull(),
    cellC: doublePrecision("cell_c").notNull(),
    cellAlpha: doublePrecision("cell_alpha").notNull(),
    cellBeta: doublePrecision("cell_beta").notNull(),
    cellGamma: doublePrecision("cell_gamma").notNull(),
  },
  (t) => [index("sample_phases_sample_idx").on(t.sampleId), check("sample_phases_role", sql`${t.role} in ('expected', 'candidate')`)],
);

/** A lab member's acknowledgement of a request's hazard declaration; required before quoting. */
export const hazardAcknowledgements = pgTable(
  "hazard_acknowledgements",
  {
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    acknowledgedAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.requestId, t.labId] })],
);

export interface QuoteLineItem {
  description: string;
  quantity: number;
  unitMinor: number;
  totalMinor: number;
}

export const quotes = pgTable(
  "quotes",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    instrumentId: uuid("instrument_id").references(() => instruments.id, { onDelete: "set null" }),
    state: quoteState("state").notNull().default("sent"),
    lineItems: jsonb("line_items").$type<QuoteLineItem[]>().notNull(),
    totalMinor: integer("total_minor").notNull(),
    currency: text("currency").notNull(),
    validUntil: timestamp("valid_until", { withTimezone: true }).notNull(),
    turnaroundDays: integer("turnaround_days").notNull(),
    notes: text("notes").notNull().default(""),
    /** The request revision this quote answers; an older one cannot be accepted until the lab re-confirms it. */
    requestRevision: integer("request_revision").notNull().default(1),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    sentAt: createdAt(),
    decidedAt: timestamp("decided_at", { withTimezone: true }),
  },
  (t) => [index("quotes_request_idx").on(t.requestId), index("quotes_lab_idx").on(t.labId, t.state)],
);

/** An accepted quote. One order per request and per quote, enforced by unique keys. */
export const orders = pgTable(
  "orders",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "restrict" }),
    quoteId: uuid("quote_id")
      .notNull()
      .references(() => quotes.id, { onDelete: "restrict" }),
    clientOrganisationId: uuid("client_organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "restrict" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "restrict" }),
    /** What people read: the client organisation's prefix, the year and a gap-free sequence (HCW-2026-0042, docs/design.md#order-numbers). */
    number: text("number").notNull(),
    state: orderState("state").notNull().default("awaiting_payment"),
    amountMinor: integer("amount_minor").notNull(),
    currency: text("currency").notNull(),
    reviewWindowDays: integer("review_window_days").notNull().default(7),
    /** The platform fee in basis points, fixed when the order is made (default 800 = 8 %). */
    platformFeeBps: integer("platform_fee_bps").notNull().default(800),
    /** When the data was delivered; the review window runs from here. */
    deliveredAt: timestamp("delivered_at", { withTimezone: true }),
    /** When the lab owes the data: set on receipt of the samples, the quote's turnaround later. */
    dueAt: timestamp("due_at", { withTimezone: true }),
    /** The client's purchase-order number, given on acceptance; on the order, the invoice and money e-mails. */
    purchaseOrderNumber: text("purchase_order_number"),
    purchaseOrderFileName: text("purchase_order_file_name"),
    purchaseOrderFileKey: text("purchase_order_file_key"),
    /** The standing agreement this order is a lot of, when it was ordered under one without quotes. */
    agreementId: uuid("agreement_id").references((): AnyPgColumn => standingAgreements.id, { onDelete: "restrict" }),
    /** The tax in `amountMinor` (the quote's net total plus this is what the client pays), fixed on acceptance. */
    taxMinor: integer("tax_minor").notNull().default(0),
    taxRateBps: integer("tax_rate_bps").notNull().default(0),
    /** How the tax was decided (app/domain/invoice-document.ts TaxTreatment); null on orders made before invoices. */
    taxTreatment: text("tax_treatment"),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    unique("orders_request_unique").on(t.requestId),
    unique("orders_quote_unique").on(t.quoteId),
    unique("orders_number_unique").on(t.number),
    index("orders_client_idx").on(t.clientOrganisationId, t.state),
    index("orders_lab_idx").on(t.labId, t.state),
  ],
);

/** The last order number given per client organisation and year; the row is locked while an order takes the next one. */
export const orderNumberCounters = pgTable(
  "order_number_counters",
  {
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    year: integer("year").notNull(),
    lastSeq: integer("last_seq").notNull(),
  },
  (t) => [primaryKey({ columns: [t.organisationId, t.year] })],
);

/** The order's timeline: one row per state change, with who and why. */
export const orderEvents = pgTable(
  "order_events",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "cascade" }),
    fromState: orderState("from_state"),
    toState: orderState("to_state").notNull(),
    actorUserId: uuid("actor_user_id").references(() => users.id, { onDelete: "set null" }),
    note: text("note").notNull().default(""),
    at: createdAt(),
  },
  (t) => [index("order_events_order_idx").on(t.orderId, t.at)],
);

export type Lab = typeof labs.$inferSelect;
export type Instrument = typeof instruments.$inferSelect;
export type SampleStage = typeof sampleStages.$inferSelect;
export type PriceList = typeof priceLists.$inferSelect;
export type MarketRequest = typeof requests.$inferSelect;
export type Sample = typeof samples.$inferSelect;
export type SamplePhase = typeof samplePhases.$inferSelect;
export type Quote = typeof quotes.$inferSelect;
export type Order = typeof orders.$inferSelect;

// ───────────────────────── Money: payments, ledger, webhooks, disputes ─────────────────────────

export const paymentStatus = pgEnum("payment_status", ["open", "paid", "failed", "expired"]);
export const ledgerKind = pgEnum("ledger_kind", ["payment_held", "payout", "platform_fee", "refund"]);
export const disputeState = pgEnum("dispute_state", ["open", "resolved"]);

/** One checkout attempt for an order at the payment provider. */
export const payments = pgTable(
  "payments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "restrict" }),
    /** "card" (the provider's checkout page) or "bank_transfer" (funding instructions with a reference). */
    method: text("method").$type<"card" | "bank_transfer">().notNull().default("card"),
    /** The provider's checkout session (card payments only). */
    checkoutSessionId: text("checkout_session_id"),
    paymentIntentId: text("payment_intent_id"),
    /** The provider's customer whose cash balance receives bank transfers. */
    customerId: text("customer_id"),
    /** What has arrived so far by transfer (minor units); equals the amount once paid in full. */
    receivedMinor: integer("received_minor").notNull().default(0),
    /** The provider's bank-transfer instructions as shown to the client: account, reference, amount remaining. */
    bankInstructions: jsonb("bank_instructions").$type<Record<string, unknown>>(),
    /** When the client was reminded that the transfer has not (fully) arrived. */
    remindedAt: timestamp("reminded_at", { withTimezone: true }),
    chargeId: text("charge_id"),
    status: paymentStatus("status").notNull().default("open"),
    amountMinor: integer("amount_minor").notNull(),
    currency: text("currency").notNull(),
    lastError: text("last_error"),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [uniqueIndex("payments_session_idx").on(t.checkoutSessionId), index("payments_order_idx").on(t.orderId)],
);

/**
 * A balanced set of ledger entries for one money movement. The provider object behind it (charge,
 * transfer, refund) is unique per kind, so processing the same event twice cannot post twice.
 */
export const ledgerTransactions = pgTable(
  "ledger_transactions",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    kind: ledgerKind("kind").notNull(),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "restrict" }),
    currency: text("currency").notNull(),
    providerObjectId: text("provider_object_id").notNull(),
    memo: text("memo").notNull().default(""),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("ledger_transactions_provider_idx").on(t.kind, t.providerObjectId),
    index("ledger_transactions_order_idx").on(t.orderId),
    index("ledger_transactions_created_idx").on(t.createdAt),
  ],
);

/** One side of a ledger transaction: a signed amount (debit positive, credit negative) on an account. */
export const ledgerEntries = pgTable(
  "ledger_entries",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    transactionId: uuid("transaction_id")
      .notNull()
      .references(() => ledgerTransactions.id, { onDelete: "restrict" }),
    account: text("account").notNull(),
    amountMinor: integer("amount_minor").notNull(),
    currency: text("currency").notNull(),
  },
  (t) => [index("ledger_entries_transaction_idx").on(t.transactionId), index("ledger_entries_account_idx").on(t.account)],
);

/** Provider webhook events by id: stored once, processed once. */
export const webhookEvents = pgTable("webhook_events", {
  id: text("id").primaryKey(),
  type: text("type").notNull(),
  payload: jsonb("payload").$type<Record<string, unknown>>().notNull(),
  receivedAt: timestamp("received_at", { withTimezone: true }).notNull().defaultNow(),
  processedAt: timestamp("processed_at", { withTimezone: true }),
});

export const disputes = pgTable(
  "disputes",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "restrict" }),
    state: disputeState("state").notNull().default("open"),
    openedBy: uuid("opened_by").references(() => users.id, { onDelete: "set null" }),
    reason: text("reason").notNull(),
    openedAt: createdAt(),
    /** The lab's answer to the client's statement. */
    labStatement: text("lab_statement"),
    labStatementBy: uuid("lab_statement_by").references(() => users.id, { onDelete: "set null" }),
    labStatementAt: timestamp("lab_statement_at", { withTimezone: true }),
    refundMinor: integer("refund_minor"),
    payoutMinor: integer("payout_minor"),
    decidedBy: uuid("decided_by").references(() => users.id, { onDelete: "set null" }),
    decidedAt: timestamp("decided_at", { withTimezone: true }),
    decisionReason: text("decision_reason"),
  },
  (t) => [uniqueIndex("disputes_order_idx").on(t.orderId)],
);

/** A file either side of a dispute hands in with its statement; the bytes live in S3 under `storageKey`. */
export const disputeEvidence = pgTable(
  "dispute_evidence",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    disputeId: uuid("dispute_id")
      .notNull()
      .references(() => disputes.id, { onDelete: "cascade" }),
    side: text("side").$type<"client" | "lab">().notNull(),
    fileName: text("file_name").notNull(),
    contentType: text("content_type").notNull(),
    sizeBytes: integer("size_bytes").notNull(),
    storageKey: text("storage_key").notNull(),
    uploadedBy: uuid("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    uploadedAt: createdAt(),
  },
  (t) => [index("dispute_evidence_dispute_idx").on(t.disputeId), check("dispute_evidence_side", sql`${t.side} in ('client', 'lab')`)],
);

/**
 * An indicative rate an admin sets between two currencies, dated: quotes in other currencies are compared at the
 * latest one, labelled as indicative. One unit of `base` is `rate` units of `quote`.
 */
export const exchangeRates = pgTable(
  "exchange_rates",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    base: text("base").notNull(),
    quote: text("quote").notNull(),
    rate: numeric("rate", { precision: 18, scale: 8 }).notNull(),
    /** The day the rate is for (the source's date, not when it was typed in). */
    asOf: date("as_of").notNull(),
    source: text("source").notNull().default(""),
    setBy: uuid("set_by").references(() => users.id, { onDelete: "set null" }),
    setAt: createdAt(),
  },
  (t) => [index("exchange_rates_pair_idx").on(t.base, t.quote, t.asOf)],
);

/**
 * Invoices, credit notes and the platform's monthly fee invoices, each numbered without gaps in its series and
 * frozen as a document snapshot when issued (docs/design.md#invoices). Never updated or deleted: a correction
 * is a credit note that refers to the invoice.
 */
export const invoices = pgTable(
  "invoices",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    kind: text("kind").$type<InvoiceKind>().notNull(),
    number: text("number").notNull(),
    /** The numbering series it took its number from (document_number_counters). */
    series: text("series").notNull(),
    seq: integer("seq").notNull(),
    /** The seller: the lab for invoices and credit notes; null for the platform's fee invoices. */
    issuerOrganisationId: uuid("issuer_organisation_id").references(() => organisations.id, { onDelete: "restrict" }),
    /** The buyer: the client for invoices and credit notes; the lab for fee invoices. */
    recipientOrganisationId: uuid("recipient_organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "restrict" }),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "restrict" }),
    /** A credit note's invoice. */
    creditsInvoiceId: uuid("credits_invoice_id"),
    /** A fee invoice's month, "2026-11". */
    period: text("period"),
    currency: text("currency").notNull(),
    netMinor: integer("net_minor").notNull(),
    taxMinor: integer("tax_minor").notNull(),
    totalMinor: integer("total_minor").notNull(),
    document: jsonb("document").$type<InvoiceDocument>().notNull(),
    /** What caused it (the order's payment, a refund's provider id, a lab and month), unique: issued once. */
    sourceKey: text("source_key").notNull(),
    issuedAt: createdAt(),
  },
  (t) => [
    uniqueIndex("invoices_number_idx").on(t.number),
    uniqueIndex("invoices_series_seq_idx").on(t.series, t.seq),
    uniqueIndex("invoices_source_idx").on(t.sourceKey),
    index("invoices_order_idx").on(t.orderId),
    index("invoices_issued_idx").on(t.issuedAt),
    index("invoices_recipient_idx").on(t.recipientOrganisationId, t.issuedAt),
    index("invoices_issuer_idx").on(t.issuerOrganisationId, t.issuedAt),
    check("invoices_kind", sql`${t.kind} in ('invoice', 'credit_note', 'fee_invoice')`),
  ],
);

/** The last number given per series (a lab's invoices or credit notes in a year, the platform's fee invoices); locked while one is taken. */
export const documentNumberCounters = pgTable("document_number_counters", {
  series: text("series").primaryKey(),
  lastSeq: integer("last_seq").notNull(),
});

export type Invoice = typeof invoices.$inferSelect;

// ───────────────────────── Repeat work: materials, standing agreements, lots, calibration history ─────────────────────────

/** A further phase of a material as declared once: an expected second phase or a candidate form (as sample_phases). */
export interface MaterialPhase {
  role: "expected" | "candidate";
  name: string | null;
  crystalSystem: string;
  centering: string;
  cell: { a: number; b: number; c: number; alpha: number; beta: number; gamma: number };
}

/**
 * A client's product, declared once and reused by every request and lot: what it is, its phases and acceptance
 * window, how it is usually measured, and its hazards with the safety data sheet (docs/design.md#materials-and-lots).
 */
export const materials = pgTable(
  "materials",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    productCode: text("product_code").notNull(),
    name: text("name").notNull(),
    formula: text("formula").notNull(),
    form: text("form").notNull().default("powder"),
    expectedPhase: text("expected_phase"),
    crystalSystem: text("crystal_system"),
    centering: text("centering"),
    cellA: doublePrecision("cell_a"),
    cellB: doublePrecision("cell_b"),
    cellC: doublePrecision("cell_c"),
    cellAlpha: doublePrecision("cell_alpha"),
    cellBeta: doublePrecision("cell_beta"),
    cellGamma: doublePrecision("cell_gamma"),
    furtherPhases: jsonb("further_phases").$type<MaterialPhase[]>().notNull().default([]),
    acceptanceWindow: jsonb("acceptance_window").$type<AcceptanceWindow>(),
    /** The usual measurement: technique, 2θ range, quality and source preference, as a request states them. */
    technique: technique("technique").notNull().default("powder_reflection"),
    rangeMin: doublePrecision("range_min"),
    rangeMax: doublePrecision("range_max"),
    quality: qualityLevel("quality").notNull().default("standard"),
    preferredSource: text("preferred_source").notNull().default("any"),
    massMg: doublePrecision("mass_mg"),
    ghsPictograms: text("ghs_pictograms").array().notNull().default(sql`'{}'::text[]`),
    hStatements: text("h_statements").array().notNull().default(sql`'{}'::text[]`),
    specialHazards: jsonb("special_hazards").$type<SpecialHazard[]>().notNull().default([]),
    handlingNotes: text("handling_notes"),
    afterMeasurement: text("after_measurement").notNull().default("return"),
    sdsFileName: text("sds_file_name"),
    sdsStorageKey: text("sds_storage_key"),
    sdsSizeBytes: integer("sds_size_bytes"),
    /** The lots whose values set the control limits, by their order on the record (1-based, inclusive); null: the first 20. */
    baselineFirstLot: integer("baseline_first_lot"),
    baselineLastLot: integer("baseline_last_lot"),
    /** Members of the organisation told when a lot breaks a control rule (its QC people); empty: the owners and managers. */
    qcUserIds: uuid("qc_user_ids").array().notNull().default(sql`'{}'::uuid[]`),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    archivedAt: timestamp("archived_at", { withTimezone: true }),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [uniqueIndex("materials_org_code_idx").on(t.organisationId, t.productCode)],
);

/**
 * A standing agreement between a client and a lab for one material: a price per lot agreed once (from a quote),
 * a turnaround, a period and a budget cap. Each new lot becomes an order at once, without a round of quotes.
 */
export const standingAgreements = pgTable(
  "standing_agreements",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    /** What people read: SA-<client letters>-<year>-<seq>. */
    number: text("number").notNull(),
    clientOrganisationId: uuid("client_organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "restrict" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "restrict" }),
    materialId: uuid("material_id")
      .notNull()
      .references(() => materials.id, { onDelete: "restrict" }),
    /** The accepted quote the terms were taken from. */
    sourceQuoteId: uuid("source_quote_id").references(() => quotes.id, { onDelete: "set null" }),
    instrumentId: uuid("instrument_id").references(() => instruments.id, { onDelete: "set null" }),
    /** The net price of one lot (its line items as quoted), in the agreement's currency. */
    lineItems: jsonb("line_items").$type<QuoteLineItem[]>().notNull(),
    pricePerLotMinor: integer("price_per_lot_minor").notNull(),
    currency: text("currency").notNull(),
    turnaroundDays: integer("turnaround_days").notNull(),
    startsOn: date("starts_on").notNull(),
    endsOn: date("ends_on").notNull(),
    /** The most the lots may cost together (net); the lot that would pass it is refused. */
    budgetCapMinor: integer("budget_cap_minor").notNull(),
    /** Days of notice either side gives to end it early. */
    noticeDays: integer("notice_days").notNull().default(14),
    /** "proposed" (the client offered it, the lab has not agreed), "active", "ending" (notice given) or "ended". */
    state: text("state").$type<"proposed" | "active" | "ending" | "ended">().notNull().default("proposed"),
    /** When notice was given, by whom and why; the agreement ends at `endingAt`. */
    noticeGivenAt: timestamp("notice_given_at", { withTimezone: true }),
    noticeGivenBy: uuid("notice_given_by").references(() => users.id, { onDelete: "set null" }),
    noticeReason: text("notice_reason"),
    endingAt: timestamp("ending_at", { withTimezone: true }),
    endedAt: timestamp("ended_at", { withTimezone: true }),
    /** Why it ended, in words: its end date, its cap, notice. */
    endedBecause: text("ended_because"),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    agreedBy: uuid("agreed_by").references(() => users.id, { onDelete: "set null" }),
    agreedAt: timestamp("agreed_at", { withTimezone: true }),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    uniqueIndex("standing_agreements_number_idx").on(t.number),
    index("standing_agreements_client_idx").on(t.clientOrganisationId, t.state),
    index("standing_agreements_lab_idx").on(t.labId, t.state),
    index("standing_agreements_material_idx").on(t.materialId),
    check("standing_agreements_state", sql`${t.state} in ('proposed', 'active', 'ending', 'ended')`),
  ],
);

/** The refined cell of one main phase with its esds, as a lot's record keeps it. */
export interface LotCell {
  a: number;
  b: number;
  c: number;
  alpha: number;
  beta: number;
  gamma: number;
}

/**
 * One checked scan of a lot of a material, on the material's record: the refined cell with its esds, the verdict
 * and the window's answer. Several scans of one lot (several rows with the same sample) make X̄/R subgroups.
 */
export const materialLots = pgTable(
  "material_lots",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    materialId: uuid("material_id")
      .notNull()
      .references(() => materials.id, { onDelete: "cascade" }),
    sampleId: uuid("sample_id").references(() => samples.id, { onDelete: "set null" }),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "set null" }),
    checkId: uuid("check_id").references(() => scanChecks.id, { onDelete: "set null" }),
    lotCode: text("lot_code").notNull(),
    /** When the lot's scan was checked: the record's time axis. */
    measuredAt: timestamp("measured_at", { withTimezone: true }).notNull(),
    cell: jsonb("cell").$type<LotCell>(),
    esd: jsonb("esd").$type<Partial<LotCell>>(),
    verdict: text("verdict"),
    /** true inside the acceptance window, false outside, null without a window or a refined cell. */
    withinWindow: boolean("within_window"),
    createdAt: createdAt(),
  },
  (t) => [index("material_lots_material_idx").on(t.materialId, t.measuredAt), uniqueIndex("material_lots_check_idx").on(t.checkId)],
);

/**
 * A repeated calibration scan of a certified standard on an instrument, checked by the lattice engine: refined
 * cell minus certificate, zero shift and profile widths make the instrument's record (docs/design.md#calibration-on-record).
 */
export const instrumentCalibrations = pgTable(
  "instrument_calibrations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    instrumentId: uuid("instrument_id")
      .notNull()
      .references(() => instruments.id, { onDelete: "cascade" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    standard: text("standard").notNull(),
    fileName: text("file_name").notNull(),
    storageKey: text("storage_key"),
    sizeBytes: integer("size_bytes"),
    sha256: text("sha256"),
    /** The engine's check (CalibrationCheck in app/domain/vetting.ts) without its plot arrays. */
    check: jsonb("check").$type<Record<string, unknown>>(),
    deviationA: doublePrecision("deviation_a"),
    zeroShift: doublePrecision("zero_shift"),
    cagliotiU: doublePrecision("caglioti_u"),
    cagliotiV: doublePrecision("caglioti_v"),
    cagliotiW: doublePrecision("caglioti_w"),
    /** Within the tolerance and no control rule broken. */
    passed: boolean("passed").notNull(),
    /** The control rules the point breaks, by number, e.g. [1, 4]. */
    rulesBroken: integer("rules_broken").array().notNull().default(sql`'{}'::integer[]`),
    measuredAt: timestamp("measured_at", { withTimezone: true }).notNull(),
    uploadedBy: uuid("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [index("instrument_calibrations_instrument_idx").on(t.instrumentId, t.measuredAt)],
);

export type Material = typeof materials.$inferSelect;
export type StandingAgreement = typeof standingAgreements.$inferSelect;
export type MaterialLot = typeof materialLots.$inferSelect;
export type InstrumentCalibration = typeof instrumentCalibrations.$inferSelect;
export type Payment = typeof payments.$inferSelect;
export type Dispute = typeof disputes.$inferSelect;

// ───────────────────────── Delivery: shipments, files, checks, data room, tokens ─────────────────────────

export const orderFileKind = pgEnum("order_file_kind", ["scan", "report", "other"]);
export const orderFileState = pgEnum("order_file_state", ["uploading", "stored", "rejected"]);
export const checkStatus = pgEnum("check_status", ["queued", "running", "done", "failed"]);

/** The client's shipment of an order's samples. */
export const shipments = pgTable("shipments", {
  orderId: uuid("order_id")
    .primaryKey()
    .references(() => orders.id, { onDelete: "cascade" }),
  carrier: text("carrier").notNull(),
  trackingNumber: text("tracking_number").notNull(),
  shippedBy: uuid("shipped_by").references(() => users.id, { onDelete: "set null" }),
  shippedAt: createdAt(),
});

/**
 * A file of an order's data room. Uploading the same name again makes a new version; nothing is
 * overwritten. Deletion is soft (`deletedAt`); the bytes stay for the retention period.
 */
export const orderFiles = pgTable(
  "order_files",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "restrict" }),
    sampleId: uuid("sample_id").references(() => samples.id, { onDelete: "set null" }),
    kind: orderFileKind("kind").notNull().default("scan"),
    name: text("name").notNull(),
    version: integer("version").notNull(),
    sizeBytes: doublePrecision("size_bytes").notNull(),
    contentType: text("content_type").notNull(),
    /** SHA-256 the uploader computed; verified against the stored object before the file counts. */
    sha256: text("sha256").notNull(),
    storageKey: text("storage_key").notNull(),
    state: orderFileState("state").notNull().default("uploading"),
    multipartUploadId: text("multipart_upload_id"),
    rejectReason: text("reject_reason"),
    /** A scan's format as the reader that read it names it ("xrdml", "gsas", …); null for other kinds and scans not read yet. */
    scanFormat: text("scan_format"),
    /** What the scan file states about its measurement, its format's label and its 2θ range; kept even when the check fails. */
    scanInfo: jsonb("scan_info").$type<ScanInfo>(),
    uploadedBy: uuid("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    uploadedVia: text("uploaded_via").notNull().default("browser"),
    createdAt: createdAt(),
    storedAt: timestamp("stored_at", { withTimezone: true }),
    deletedAt: timestamp("deleted_at", { withTimezone: true }),
    deletedBy: uuid("deleted_by").references(() => users.id, { onDelete: "set null" }),
    /** How the scan was measured: read from the file where it states it, entered by the lab otherwise. */
    conditions: jsonb("conditions").$type<MeasurementConditions>(),
    /** Hidden from the client's data room by the client; the file itself stays for the retention period. */
    archivedAt: timestamp("archived_at", { withTimezone: true }),
    archivedBy: uuid("archived_by").references(() => users.id, { onDelete: "set null" }),
  },
  (t) => [uniqueIndex("order_files_version_idx").on(t.orderId, t.name, t.version), index("order_files_order_idx").on(t.orderId)],
);

/** The automatic lattice check of one stored scan. */
export const scanChecks = pgTable(
  "scan_checks",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    fileId: uuid("file_id")
      .notNull()
      .references(() => orderFiles.id, { onDelete: "cascade" }),
    status: checkStatus("status").notNull().default("queued"),
    verdict: text("verdict"),
    /** The engine's one sentence when it could not read the scan. */
    error: text("error"),
    result: jsonb("result").$type<Record<string, unknown>>(),
    attempts: integer("attempts").notNull().default(0),
    queuedAt: createdAt(),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("scan_checks_file_idx").on(t.fileId)],
);

/** Read-only links to an order's data room for a colleague outside the organisation. */
export const shareLinks = pgTable(
  "share_links",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "cascade" }),
    organisationId: uuid("organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull(),
    label: text("label").notNull(),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("share_links_token_idx").on(t.tokenHash), index("share_links_order_idx").on(t.orderId)],
);

/** Who downloaded which file, when, from where — through a signed-in session or a share link. */
export const fileAccessLog = pgTable(
  "file_access_log",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    fileId: uuid("file_id")
      .notNull()
      .references(() => orderFiles.id, { onDelete: "cascade" }),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    shareLinkId: uuid("share_link_id").references(() => shareLinks.id, { onDelete: "set null" }),
    clientAddress: text("client_address"),
    at: createdAt(),
  },
  (t) => [index("file_access_log_file_idx").on(t.fileId, t.at)],
);

/** Tokens for uploads straight from an instrument computer; only the SHA-256 of the token is kept. */
export const apiTokens = pgTable(
  "api_tokens",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    name: text("name").notNull(),
    tokenHash: text("token_hash").notNull(),
    /** The first characters, shown so people can tell their tokens apart. */
    prefix: text("prefix").notNull(),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    createdAt: createdAt(),
    lastUsedAt: timestamp("last_used_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
  },
  (t) => [uniqueIndex("api_tokens_hash_idx").on(t.tokenHash), index("api_tokens_lab_idx").on(t.labId)],
);

/** Fixed-window request counters shared by every app server (rate limits). */
export const rateLimitBuckets = pgTable(
  "rate_limit_buckets",
  {
    key: text("key").notNull(),
    windowStart: timestamp("window_start", { withTimezone: true }).notNull(),
    count: integer("count").notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.key, t.windowStart] })],
);

/** What the lab records as each sample arrives: its state, how much came, where it is kept, who took it in. */
export const sampleReceipts = pgTable(
  "sample_receipts",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    orderId: uuid("order_id")
      .notNull()
      .references(() => orders.id, { onDelete: "cascade" }),
    sampleId: uuid("sample_id")
      .notNull()
      .references(() => samples.id, { onDelete: "cascade" }),
    /** "good", "damaged", "leaking" or "mislabelled" (RECEIPT_CONDITIONS in app/domain/receipt.ts). */
    condition: text("condition").notNull(),
    sealIntact: boolean("seal_intact").notNull(),
    /** The mass or volume received, in `amountUnit` (mg, g, µL, mL). */
    amount: doublePrecision("amount"),
    amountUnit: text("amount_unit"),
    storagePlace: text("storage_place").notNull().default(""),
    photoName: text("photo_name"),
    photoKey: text("photo_key"),
    photoSizeBytes: integer("photo_size_bytes"),
    photoContentType: text("photo_content_type"),
    /** Why the lab refused this sample on arrival; null when it took it in. */
    refusalReason: text("refusal_reason"),
    note: text("note").notNull().default(""),
    receivedBy: uuid("received_by").references(() => users.id, { onDelete: "set null" }),
    receivedAt: createdAt(),
  },
  (t) => [uniqueIndex("sample_receipts_sample_idx").on(t.orderId, t.sampleId)],
);

export type OrderFile = typeof orderFiles.$inferSelect;
export type ScanCheck = typeof scanChecks.$inferSelect;

// Notifications: the transactional e-mail outbox, the in-app list and each person's e-mail choices.
export const outboxStatus = pgEnum("outbox_status", ["queued", "sent", "parked"]);

/** One e-mail to one recipient, written in the same transaction as the milestone it reports. */
export const outboxMessages = pgTable(
  "outbox_messages",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    kind: text("kind").notNull(),
    to: text("to").notNull(),
    subject: text("subject").notNull(),
    html: text("html").notNull(),
    text: text("text").notNull(),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "set null" }),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    status: outboxStatus("status").notNull().default("queued"),
    attempts: integer("attempts").notNull().default(0),
    lastError: text("last_error"),
    /** Payment, dispute and safety messages go out whatever the person's preferences say. */
    essential: boolean("essential").notNull().default(false),
    /** Held for the recipient's daily digest instead of being sent on its own. */
    digest: boolean("digest").notNull().default(false),
    /** The mail-send job carrying this row; null until the dispatcher has handed it to the queue. */
    jobId: uuid("job_id"),
    createdAt: createdAt(),
    sentAt: timestamp("sent_at", { withTimezone: true }),
  },
  (t) => [
    index("outbox_messages_status_idx").on(t.status, t.createdAt),
    index("outbox_messages_order_idx").on(t.orderId),
    index("outbox_messages_undispatched_idx").on(t.createdAt).where(sql`${t.jobId} is null and ${t.status} = 'queued'`),
  ],
);

export const notifications = pgTable(
  "notifications",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    kind: text("kind").notNull(),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "set null" }),
    /** The organisation the notice belongs to (the bell shows the active one's); null for the person alone. */
    organisationId: uuid("organisation_id").references(() => organisations.id, { onDelete: "cascade" }),
    title: text("title").notNull(),
    /** Where the notification leads inside the app (a path). */
    href: text("href").notNull().default(""),
    createdAt: createdAt(),
    readAt: timestamp("read_at", { withTimezone: true }),
  },
  (t) => [index("notifications_user_idx").on(t.userId, t.createdAt)],
);

/** A row only where a person has changed the default (every e-mail on). */
export const notificationPreferences = pgTable(
  "notification_preferences",
  {
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    kind: text("kind").notNull(),
    emailEnabled: boolean("email_enabled").notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.kind] })],
);

export type OutboxMessage = typeof outboxMessages.$inferSelect;

// Working together: message threads, request revisions.

/**
 * One message of a thread. A request thread is the client and one lab before an order (`orderId` null, keyed by
 * request and lab); an order thread is the client and the order's lab (`orderId` set). Admins read an order's
 * thread only through its dispute.
 */
export const messages = pgTable(
  "messages",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    labId: uuid("lab_id")
      .notNull()
      .references(() => labs.organisationId, { onDelete: "cascade" }),
    /** The request's client organisation, kept beside the lab so that either side's unread count is one index read. */
    clientOrganisationId: uuid("client_organisation_id")
      .notNull()
      .references(() => organisations.id, { onDelete: "cascade" }),
    orderId: uuid("order_id").references(() => orders.id, { onDelete: "cascade" }),
    authorUserId: uuid("author_user_id").references(() => users.id, { onDelete: "set null" }),
    authorOrganisationId: uuid("author_organisation_id").references(() => organisations.id, { onDelete: "set null" }),
    body: text("body").notNull(),
    attachmentName: text("attachment_name"),
    attachmentKey: text("attachment_key"),
    attachmentSizeBytes: integer("attachment_size_bytes"),
    attachmentContentType: text("attachment_content_type"),
    createdAt: createdAt(),
  },
  (t) => [
    index("messages_request_lab_idx").on(t.requestId, t.labId, t.createdAt),
    index("messages_order_idx").on(t.orderId, t.createdAt),
    index("messages_lab_created_idx").on(t.labId, t.createdAt),
    index("messages_client_created_idx").on(t.clientOrganisationId, t.createdAt),
  ],
);

/** How far each person has read each thread ("request:<requestId>:<labId>" or "order:<orderId>"): unread counts. */
export const messageReads = pgTable(
  "message_reads",
  {
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    threadKey: text("thread_key").notNull(),
    lastReadAt: timestamp("last_read_at", { withTimezone: true }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.threadKey] })],
);

/** What the client changed in a published request, revision by revision, in words for the labs that quoted. */
export const requestRevisions = pgTable(
  "request_revisions",
  {
    requestId: uuid("request_id")
      .notNull()
      .references(() => requests.id, { onDelete: "cascade" }),
    revision: integer("revision").notNull(),
    summary: text("summary").notNull(),
    changedBy: uuid("changed_by").references(() => users.id, { onDelete: "set null" }),
    at: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.requestId, t.revision] })],
);

export type Message = typeof messages.$inferSelect;
export type SampleReceipt = typeof sampleReceipts.$inferSelect;
