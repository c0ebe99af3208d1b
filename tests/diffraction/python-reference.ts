// Runs the reference scripts of tests/reference with Debian's /usr/bin/python3 and caches each answer for this test run.
import { execFileSync } from "node:child_process";
import { fileURLToPath } from "node:url";

// Debian's interpreter, where python3-gemmi, python3-pymatgen and python3-xraylib are installed (docs/reference-values.md#reference-libraries).
const PYTHON = "/usr/bin/python3";
const cache = new Map<string, unknown>();

/** The parsed JSON that tests/reference/<script> prints for `input` on stdin; one Python run per distinct call. */
export function runReference<T>(script: string, input: unknown, args: string[] = []): T {
  const stdin = JSON.stringify(input);
  const key = `${script} ${args.join(" ")}\n${stdin}`;
  if (!cache.has(key)) {
    const path = fileURLToPath(new URL(`../reference/${script}`, import.meta.url));
    // stderr is captured (library warnings stay out of the test output); a failure carries it in its message.
    const out = execFileSync(PYTHON, [path, ...args], {
      input: stdin,
      encoding: "utf8",
      maxBuffer: 64 * 1024 * 1024,
      stdio: ["pipe", "pipe", "pipe"],
    });
    cache.set(key, JSON.parse(out));
  }
  return cache.get(key) as T;
}
