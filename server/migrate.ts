// Applies the SQL migrations in drizzle/ to a database (the app's by default, or the URL given).
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import path from "node:path";
import pg from "pg";
import { root } from "../services/paths";
import { isMain } from "../services/process";
import { databaseUrl } from "../services/postgres";

export async function migrateDatabase(url: string) {
  const pool = new pg.Pool({ connectionString: url, max: 1 });
  try {
    await migrate(drizzle(pool), { migrationsFolder: path.join(root, "drizzle") });
  } finally {
    await pool.end();
  }
}

if (isMain(import.meta.url)) {
  const url = process.env.DATABASE_URL ?? databaseUrl(process.argv[2] ?? "diffractory");
  await migrateDatabase(url);
  console.log(`migrations applied to ${new URL(url).pathname.slice(1)}`);
}
