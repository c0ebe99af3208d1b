// Whether the database answers, for the health check; errors are left as thrown so the caller can name the cause.
import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";

/** The smallest query there is; resolves when PostgreSQL answers. */
export function pingDatabase() {
  return db.execute(sql`select 1`);
}
