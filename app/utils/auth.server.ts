// Sign-in with e-mail and password (remix-auth's form strategy) and account creation.
import { sql } from "drizzle-orm";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { db, schema } from "~/db/client.server";
import type { OrganisationKind, User } from "~/db/schema";
import { hashPassword, verifyPassword } from "~/models/accounts/password.server";
import { readForm } from "~/utils/form.server";

export class WrongCredentials extends Error {}

export const normaliseEmail = (email: string) => email.trim().toLowerCase();

export const authenticator = new Authenticator<User>();

authenticator.use(
  // The strategy hands over its own parse of the body (request.clone().formData()), which checks nothing; the
  // fields are read again through the one form reader, which refuses a NUL and bytes that are not UTF-8.
  new FormStrategy(async ({ request }) => {
    const form = await readForm(request);
    const email = normaliseEmail(String(form.get("email") ?? ""));
    const password = String(form.get("password") ?? "");
    const [user] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${email}`).limit(1);
    const ok = await verifyPassword(user?.passwordHash ?? null, password);
    if (!user || !ok) throw new WrongCredentials("The e-mail or password is not right.");
    return user;
  }),
  "password",
);

/** Whether a value can be a slug slugify made (with a "-N" suffix): anything else names no organisation. */
export const isSlug = (value: string) => /^[a-z0-9-]{1,64}$/.test(value);

export function slugify(name: string) {
  return (
    name
      .normalize("NFKD")
      .replace(/[\u0300-\u036f]/g, "")
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, "-")
      .replace(/^-+|-+$/g, "")
      .slice(0, 48) || "organisation"
  );
}

export class EmailTaken extends Error {}

/** Creates a person with their first organisation, in which they are owner (client) or manager (lab). */
export async function createAccount(input: {
  name: string;
  email: string;
  password: string;
  kind: OrganisationKind;
  organisationName: string;
  city?: string;
  country?: string;
}) {
  const passwordHash = await hashPassword(input.password);
  try {
    return await db.transaction(async (tx) => {
      const [user] = await tx
        .insert(schema.users)
        .values({ name: input.name, email: normaliseEmail(input.email), passwordHash })
        .returning();
      const base = slugify(input.organisationName);
      const taken = await tx
        .select({ slug: schema.organisations.slug })
        .from(schema.organisations)
        .where(sql`${schema.organisations.slug} = ${base} or ${schema.organisations.slug} like ${base + "-%"}`);
      const slug = taken.length === 0 ? base : `${base}-${taken.length + 1}`;
      const [organisation] = await tx
        .insert(schema.organisations)
        .values({ kind: input.kind, name: input.organisationName, slug, city: input.city || null, country: input.country || null })
        .returning();
      await tx.insert(schema.memberships).values({
        userId: user.id,
        organisationId: organisation.id,
        role: input.kind === "client" ? "owner" : "manager",
      });
      // A lab's marketplace row starts in the "applied" vetting state.
      if (input.kind === "lab") await tx.insert(schema.labs).values({ organisationId: organisation.id });
      return { user, organisation };
    });
  } catch (err) {
    const code = (err as { cause?: { code?: string }; code?: string }).cause?.code ?? (err as { code?: string }).code;
    if (code === "23505") throw new EmailTaken("An account with this e-mail already exists.");
    throw err;
  }
}
