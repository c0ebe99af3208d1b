// The one Drizzle schema of Diffractory; drizzle-kit generates the SQL migrations in drizzle/ from it.
import { sql } from "drizzle-orm";
import { bigserial, boolean, index, jsonb, pgEnum, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid } from "drizzle-orm/pg-core";

export const organisationKind = pgEnum("organisation_kind", ["client", "lab"]);
/** Client organisations have owners and members; labs have managers and operators (DESIGN.md). */
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
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("organisations_slug_idx").on(t.slug), index("organisations_kind_idx").on(t.kind)],
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
    createdAt: createdAt(),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
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
  (t) => [index("audit_log_at_idx").on(t.at), index("audit_log_org_idx").on(t.organisationId)],
);

export type User = typeof users.$inferSelect;
export type Organisation = typeof organisations.$inferSelect;
export type Membership = typeof memberships.$inferSelect;
export type MembershipRole = (typeof membershipRole.enumValues)[number];
export type OrganisationKind = (typeof organisationKind.enumValues)[number];
