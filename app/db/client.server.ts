// The shared PostgreSQL pool and Drizzle handle, created once per process (and kept across dev reloads).
import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import pg from "pg";
import { config } from "~/config.server";
import * as schema from "./schema";

type Db = NodePgDatabase<typeof schema> & { $client: pg.Pool };
const g = globalThis as unknown as { __diffractoryDb?: Db };

function create(): Db {
  const pool = new pg.Pool({ connectionString: config.databaseUrl, max: config.database.poolMax });
  // An idle client losing its connection (a database restart) must not crash the process.
  pool.on("error", (err) => console.warn("postgres pool:", err.message));
  // DIFFRACTORY_LOG_SQL=1 prints every query with its parameters (the load benchmark reads them from here).
  const logger = config.database.logSql ? { logQuery: (query: string, params: unknown[]) => console.log(`SQL ${JSON.stringify({ query, params })}`) } : false;
  return drizzle(pool, { schema, logger }) as Db;
}

export const db: Db = (g.__diffractoryDb ??= create());
export { schema };

/** A transaction handle, as Drizzle passes it to `db.transaction`'s callback. */
export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
