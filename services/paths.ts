// Where the local services keep their data, logs and process ids (all inside the project's .data/ folder).
import path from "node:path";
import { fileURLToPath } from "node:url";

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const dataDir = path.join(root, ".data");
export const runDir = path.join(dataDir, "run");
export const logDir = path.join(dataDir, "logs");
