// Any unexpected console.error fails the test that caused it.
import { afterEach, beforeEach, vi } from "vitest";

let errors: unknown[][] = [];

beforeEach(() => {
  errors = [];
  const original = console.error.bind(console);
  vi.spyOn(console, "error").mockImplementation((...args: unknown[]) => {
    errors.push(args);
    original(...args);
  });
});

afterEach(() => {
  const seen = errors;
  errors = [];
  vi.mocked(console.error).mockRestore?.();
  if (seen.length > 0) {
    throw new Error(`console.error was called ${seen.length} time(s): ${seen.map((a) => a.map(String).join(" ")).join(" | ")}`);
  }
});
