// npm run dev: the app with hot reload (Vite middleware) and the job worker, on the services `npm run services:up` starts.
import { spawn } from "node:child_process";
import { root } from "../services/paths";

const children = [
  spawn(process.execPath, ["--import", "tsx", "server/main.ts"], { cwd: root, stdio: "inherit", env: process.env }),
  spawn(process.execPath, ["--import", "tsx", "server/worker.ts"], { cwd: root, stdio: "inherit", env: process.env }),
];
const stop = (signal: NodeJS.Signals) => children.forEach((c) => c.kill(signal));
process.on("SIGINT", () => stop("SIGINT"));
process.on("SIGTERM", () => stop("SIGTERM"));
for (const c of children)
  c.on("exit", (code) => {
    stop("SIGTERM");
    process.exit(code ?? 0);
  });
