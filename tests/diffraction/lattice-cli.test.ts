// The command line as other tools call it: `npx tsx scripts/lattice.ts FILE --source … --json`, on files in a
// temporary directory; JSON on stdout, exit 0 for any check made, exit 2 and one stderr line for bad input.
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { formatScanAsPdCif, formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { RUTILE, SILICON } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";

let dir: string;
const CU: Radiation = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" };
const SI_CELL = "5.431,5.431,5.431,90,90,90";

function lattice(...args: string[]) {
  const r = spawnSync("npx", ["tsx", "scripts/lattice.ts", ...args], { cwd: process.cwd(), encoding: "utf8", timeout: 60_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "lattice-cli-"));
  const si = simulatePattern({
    structure: SILICON,
    radiation: CU,
    twoThetaMin: 15,
    twoThetaMax: 125,
    step: 0.02,
    zeroShift: 0.03,
    background: { constant: 120 },
    noise: { seed: 9 },
  });
  writeFileSync(join(dir, "si.xy"), formatScanAsXy(si, "silicon, simulated"));
  writeFileSync(join(dir, "si.cif"), formatScanAsPdCif(si, CU));
  const siMono = simulatePattern({
    structure: SILICON,
    radiation: { kind: "anode", anode: "Mo", monochromation: "k_alpha1_only" },
    twoThetaMin: 8,
    twoThetaMax: 60,
    step: 0.01,
    noise: { seed: 4 },
  });
  writeFileSync(join(dir, "si-mo.xy"), formatScanAsXy(siMono));
  const rutile = simulatePattern({
    structure: RUTILE,
    radiation: CU,
    twoThetaMin: 15,
    twoThetaMax: 125,
    step: 0.02,
    background: { constant: 100 },
    noise: { seed: 2 },
  });
  writeFileSync(join(dir, "rutile.xy"), formatScanAsXy(rutile));
  writeFileSync(join(dir, "empty.xy"), "");
  writeFileSync(join(dir, "few.xy"), "10 1\n10.02 2\n10.04 3\n");
  writeFileSync(join(dir, "binary.raw"), Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x00, 0x00, 0x01, 0x02]));
}, 60_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("lattice command line", () => {
  it("prints one JSON object with the contract's fields for a consistent sample", () => {
    const r = lattice(join(dir, "si.xy"), "--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", SI_CELL, "--json");
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.verdict).toBe("consistent");
    for (const key of ["a", "b", "c", "alpha", "beta", "gamma"]) {
      expect(typeof out.cell[key]).toBe("number");
      expect(typeof out.esd[key]).toBe("number");
    }
    // SILICON's cell is the NIST SRM 640c value (docs/reference-values.md#certified-lattice-parameters), rounded to 5.431195 Å in the structure.
    expect(Math.abs(out.cell.a - 5.431195)).toBeLessThan(2e-4);
    expect(out.zeroShift).toBeCloseTo(0.03, 2);
    expect(out.figuresOfMerit.M20).toBeGreaterThan(10);
    expect(typeof out.figuresOfMerit.FN).toBe("number");
    expect(Array.isArray(out.warnings)).toBe(true);
    expect(out.elapsedMs).toBeGreaterThan(0);
    expect(out.peaks.length).toBeGreaterThan(5);
    for (const p of out.peaks) {
      for (const key of ["twoTheta", "d", "intensity", "fwhm"]) expect(typeof p[key]).toBe("number");
      expect(p.hkl === null || (Array.isArray(p.hkl) && p.hkl.length === 3)).toBe(true);
    }
    // Bragg's law on the strongest line, Si 111 at d = 3.1356 Å (docs/reference-values.md#silicon-reflections, a = 5.431 Å).
    expect(out.peaks[0].hkl).toEqual([1, 1, 1]);
    expect(out.peaks[0].d).toBeCloseTo(3.1356, 2);
  });

  it("reads pdCIF, and prints a readable table without --json", () => {
    const r = lattice(join(dir, "si.cif"), "--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", SI_CELL);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/Verdict: consistent/);
    expect(r.stdout).toMatch(/1 1 1/);
  });

  it("--monochromatic means Kα1 only; --wavelength overrides the anode", () => {
    const mono = lattice(join(dir, "si-mo.xy"), "--source", "Mo", "--monochromatic", "--system", "cubic", "--centering", "F", "--cell", SI_CELL, "--json");
    expect(mono.code).toBe(0);
    expect(JSON.parse(mono.stdout).verdict).toBe("consistent");
    // docs/reference-values.md#x-ray-wavelengths: Mo Kα1 = 0.709317 Å.
    const custom = lattice(
      join(dir, "si-mo.xy"),
      "--source",
      "Cu",
      "--wavelength",
      "0.709317",
      "--system",
      "cubic",
      "--centering",
      "F",
      "--cell",
      SI_CELL,
      "--json",
    );
    expect(custom.code).toBe(0);
    const out = JSON.parse(custom.stdout);
    expect(out.wavelength).toBe(0.709317);
    expect(out.verdict).toBe("consistent");
  });

  it("exits 0 with an inconsistent verdict for a wrong phase", () => {
    const r = lattice(join(dir, "rutile.xy"), "--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", "5.6402,5.6402,5.6402,90,90,90", "--json");
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).verdict).toBe("inconsistent");
  });

  it.each([
    ["an unknown option", ["si.xy", "--source", "Cu", "--colour"]],
    ["a missing file", ["nope.xy", "--source", "Cu"]],
    ["an unknown source", ["si.xy", "--source", "W"]],
    ["a cell of five numbers", ["si.xy", "--source", "Cu", "--cell", "5.43,5.43,5.43,90,90"]],
    ["a cell that breaks the system", ["si.xy", "--source", "Cu", "--system", "cubic", "--cell", "5.43,5.5,5.43,90,90,90"]],
    ["an unknown system", ["si.xy", "--source", "Cu", "--system", "cubical"]],
    ["an empty file", ["empty.xy", "--source", "Cu"]],
    ["too few points", ["few.xy", "--source", "Cu"]],
    ["a binary file", ["binary.raw", "--source", "Cu"]],
  ])("exits 2 with one line on stderr for %s", (_name, args) => {
    const [file, ...rest] = args;
    const r = lattice(join(dir, file), ...rest, "--json");
    expect(r.code).toBe(2);
    expect(r.stdout).toBe("");
    const lines = r.stderr.trimEnd().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).not.toMatch(/\bat .*\(.*:\d+:\d+\)/);
  });
});
