// Stops the local fakes and PostgreSQL started by services/up.ts.
import fs from "node:fs";
import path from "node:path";
import * as postgres from "./postgres";
import { runDir } from "./paths";
import { isMain, portOpen } from "./process";
import { FAKES } from "./up";

export async function servicesDown() {
  for (const fake of FAKES) {
    const pidFile = path.join(runDir, `${fake.name}.pid`);
    if (fs.existsSync(pidFile)) {
      const pid = Number(fs.readFileSync(pidFile, "utf8"));
      try {
        process.kill(-pid, "SIGTERM");
      } catch {
        try {
          process.kill(pid, "SIGTERM");
        } catch {
          /* already gone */
        }
      }
      fs.rmSync(pidFile);
    }
    for (let i = 0; i < 50 && (await portOpen(fake.port)); i++) await new Promise((r) => setTimeout(r, 100));
    console.log(`${fake.name} fake stopped`);
  }
  postgres.stop();
  console.log("postgres stopped");
}

if (isMain(import.meta.url)) {
  await servicesDown();
}
