// The SQL an app server ran, read back from its log (app/db/client.server.ts logs each query as a line `SQL {json}` when
// DIFFRACTORY_LOG_SQL is set): the bare server replays it as the yardstick (bench/bare-server.ts).
import fs from "node:fs";
import type { CapturedQuery } from "./bare-server";

/** A reader of the log that answers the queries logged since its previous call. */
export function queryLogReader(logFile: string) {
  let offset = 0;
  return () => {
    const text = fs.readFileSync(logFile, "utf8");
    const lines = text
      .slice(offset)
      .split("\n")
      .filter((l) => l.startsWith("SQL "));
    offset = text.length;
    return lines.map((l) => JSON.parse(l.slice(4)) as CapturedQuery);
  };
}
