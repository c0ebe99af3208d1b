// The command line as other tools call it: `npx tsx scripts/lattice.ts FILE… --source … --json`, on files in a
// temporary directory; one JSON line per file on stdout (a bad file's line holds `error`), exit 0 when any file
// was checked, exit 2 and one stderr line for bad options, exit 2 when every file was bad.
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { formatScanAsPdCif, formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { RUTILE, SILICON } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction/wavelengths";
import { rawVersion3 } from "./readers/write-formats";

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
  // A synchrotron-like scan whose pdCIF states its one wavelength (_diffrn_radiation_wavelength, pdCIF dictionary).
  const synchrotron: Radiation = { kind: "custom", wavelength: 0.7 };
  const siSync = simulatePattern({
    structure: SILICON,
    radiation: synchrotron,
    twoThetaMin: 5,
    twoThetaMax: 60,
    step: 0.01,
    background: { constant: 80 },
    noise: { seed: 5 },
  });
  writeFileSync(join(dir, "si-0.7.cif"), formatScanAsPdCif(siSync, synchrotron));
  writeFileSync(join(dir, "si.raw"), rawVersion3(si.twoTheta[0], si.twoTheta[1] - si.twoTheta[0], si.intensity));
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

  it("--transparency refines the transparency term or holds it from the sample's μ", () => {
    for (const [value, kind] of [
      ["refine", "refined"],
      ["50", "fixed"],
    ] as const) {
      const r = lattice(join(dir, "si.xy"), "--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", SI_CELL, "--transparency", value, "--json");
      expect(r.code, r.stderr).toBe(0);
      const out = JSON.parse(r.stdout);
      expect(out.transparency).toBe(kind);
      expect(out.verdict).toBe("consistent");
    }
  });

  it("exits 0 with an inconsistent verdict for a wrong phase", () => {
    const r = lattice(join(dir, "rutile.xy"), "--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", "5.6402,5.6402,5.6402,90,90,90", "--json");
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).verdict).toBe("inconsistent");
  });

  it.each([
    ["an unknown option", ["si.xy", "--source", "Cu", "--colour"]],
    ["an unknown source", ["si.xy", "--source", "W"]],
    ["a cell of five numbers", ["si.xy", "--source", "Cu", "--cell", "5.43,5.43,5.43,90,90"]],
    ["a cell that breaks the system", ["si.xy", "--source", "Cu", "--system", "cubic", "--cell", "5.43,5.5,5.43,90,90,90"]],
    ["an unknown system", ["si.xy", "--source", "Cu", "--system", "cubical"]],
    ["a transparency that is neither refine nor a positive μ", ["si.xy", "--source", "Cu", "--transparency", "-3"]],
  ])("exits 2 with one line on stderr and nothing on stdout for %s", (_name, args) => {
    const [file, ...rest] = args;
    const r = lattice(join(dir, file), ...rest, "--json");
    expect(r.code).toBe(2);
    expect(r.stdout).toBe("");
    const lines = r.stderr.trimEnd().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).not.toMatch(/\bat .*\(.*:\d+:\d+\)/);
  });

  it.each([
    ["a missing file", ["nope.xy", "--source", "Cu"]],
    ["an empty file", ["empty.xy", "--source", "Cu"]],
    ["too few points", ["few.xy", "--source", "Cu"]],
    ["a binary file that is no scan", ["binary.raw", "--source", "Cu"]],
    ["a file that states no radiation, without --source", ["si.xy"]],
  ])("exits 2 for %s: one stderr line in the table, one JSON line with the error", (_name, args) => {
    const [file, ...rest] = args;
    const table = lattice(join(dir, file), ...rest);
    expect(table.code).toBe(2);
    expect(table.stdout).toBe("");
    const lines = table.stderr.trimEnd().split("\n");
    expect(lines).toHaveLength(1);
    expect(lines[0]).toContain(join(dir, file));
    expect(lines[0]).not.toMatch(/\bat .*\(.*:\d+:\d+\)/);

    const json = lattice(join(dir, file), ...rest, "--json");
    expect(json.code).toBe(2);
    expect(json.stderr).toBe("");
    const out = json.stdout.trimEnd().split("\n");
    expect(out).toHaveLength(1);
    const line = JSON.parse(out[0]);
    expect(Object.keys(line)).toEqual(["file", "error"]);
    expect(line.file).toBe(join(dir, file));
    expect(line.error).toMatch(/^[A-Z].*\.$/);
    expect(line.error).not.toContain("\n");
  });
});

describe("lattice command line on several files", () => {
  const siOptions = ["--source", "Cu", "--system", "cubic", "--centering", "F", "--cell", SI_CELL];
  const jsonLines = (stdout: string) =>
    stdout
      .trimEnd()
      .split("\n")
      .map((line) => JSON.parse(line));

  it("checks every file with the same options, one JSON line each, file first and in the order given", () => {
    const files = [join(dir, "si.xy"), join(dir, "si.cif"), join(dir, "rutile.xy")];
    const r = lattice(...files, ...siOptions, "--json");
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    const lines = jsonLines(r.stdout);
    expect(lines.map((l) => l.file)).toEqual(files);
    for (const line of lines) {
      expect(Object.keys(line)[0]).toBe("file");
      expect(typeof line.elapsedMs).toBe("number");
      expect(line.elapsedMs).toBeGreaterThan(0);
    }
    // The Si cell is NIST SRM 640c's (docs/reference-values.md#certified-lattice-parameters); rutile is not
    // face-centred cubic at all, so the same options give it the inconsistent verdict.
    expect(lines.map((l) => l.verdict)).toEqual(["consistent", "consistent", "inconsistent"]);
    for (const line of lines.slice(0, 2)) expect(Math.abs(line.cell.a - 5.431195)).toBeLessThan(2e-4);
  });

  it("reports a bad file among good ones on its own line and still exits 0", () => {
    const files = [join(dir, "empty.xy"), join(dir, "si.xy"), join(dir, "nope.xy"), join(dir, "si.cif")];
    const json = lattice(...files, ...siOptions, "--json");
    expect(json.code).toBe(0);
    expect(json.stderr).toBe("");
    const lines = jsonLines(json.stdout);
    expect(lines.map((l) => l.file)).toEqual(files);
    expect(typeof lines[0].error).toBe("string");
    expect(lines[1].verdict).toBe("consistent");
    expect(typeof lines[2].error).toBe("string");
    expect(lines[3].verdict).toBe("consistent");

    const table = lattice(...files, ...siOptions);
    expect(table.code).toBe(0);
    // Each table under a header naming its file; one stderr line per bad file, naming it.
    expect(table.stdout).toContain(`=== ${files[1]} ===`);
    expect(table.stdout).toContain(`=== ${files[3]} ===`);
    expect(table.stdout.match(/Verdict: consistent/g)).toHaveLength(2);
    const errors = table.stderr.trimEnd().split("\n");
    expect(errors).toHaveLength(2);
    expect(errors[0]).toContain(files[0]);
    expect(errors[1]).toContain(files[2]);
  });

  it("exits 2 when every file is bad", () => {
    const files = [join(dir, "empty.xy"), join(dir, "few.xy"), join(dir, "nope.xy")];
    const json = lattice(...files, "--source", "Cu", "--json");
    expect(json.code).toBe(2);
    const lines = jsonLines(json.stdout);
    expect(lines.map((l) => l.file)).toEqual(files);
    for (const line of lines) expect(typeof line.error).toBe("string");

    const table = lattice(...files, "--source", "Cu");
    expect(table.code).toBe(2);
    expect(table.stdout).toBe("");
    expect(table.stderr.trimEnd().split("\n")).toHaveLength(3);
  });

  it("uses the radiation each file states when --source and --wavelength are left out", () => {
    const files = [join(dir, "si-0.7.cif"), join(dir, "si.cif"), join(dir, "si.raw"), join(dir, "si.xy")];
    const r = lattice(...files, "--system", "cubic", "--centering", "F", "--cell", SI_CELL, "--json");
    expect(r.code).toBe(0);
    const [single, doublet, binary, silent] = jsonLines(r.stdout);
    // One pdCIF states λ = 0.7 Å (it was simulated with it), the other "Cu K-alpha" with the Kα1/Kα2 loop, and the
    // binary raw file names the Cu anode: Cu Kα1 = 1.540593 Å (docs/reference-values.md#x-ray-wavelengths). The
    // two-column file states nothing.
    expect(single.wavelength).toBe(0.7);
    expect(doublet.wavelength).toBe(1.540593);
    expect(binary.wavelength).toBe(1.540593);
    for (const line of [single, doublet, binary]) {
      expect(line.verdict).toBe("consistent");
      expect(Math.abs(line.cell.a - 5.431195)).toBeLessThan(2e-4);
    }
    expect(silent.error).toMatch(/radiation/);
  });
});

describe("lattice command line on measured files (tests/data/real/SOURCES.md)", () => {
  const real = (name: string) => join("tests", "data", "real", name);
  const LAB6_CELL = "4.156826,4.156826,4.156826,90,90,90";

  it("reads each instrument's file as bytes and takes the tube it names", () => {
    const files = [real("bt86-cu.uxd"), real("na2co2teo6-cu-nifilter.xrdml"), real("lab6-srm660c-cu.gsas")];
    const r = lattice(...files, "--json");
    expect(r.code).toBe(0);
    const lines = r.stdout
      .trimEnd()
      .split("\n")
      .map((line) => JSON.parse(line));
    expect(lines.map((l) => l.file)).toEqual(files);
    // The UXD header says _ANODE='Cu' and the XRDML file a Cu tube: Cu Kα1 = 1.540593 Å
    // (docs/reference-values.md#x-ray-wavelengths). The GSAS file states no radiation at all.
    for (const line of lines.slice(0, 2)) {
      expect(line.wavelength).toBe(1.540593);
      expect(line.peaks.length).toBeGreaterThan(5);
      expect(typeof line.elapsedMs).toBe("number");
    }
    expect(lines[2].error).toMatch(/radiation/);
  });

  it("finds the certified cell of LaB6 SRM 660c in a measured scan", () => {
    const r = lattice(
      real("lab6-srm660c-cu.gsas"),
      "--source",
      "Cu",
      "--system",
      "cubic",
      "--centering",
      "P",
      "--cell",
      LAB6_CELL,
      "--refine",
      "displacement",
      "--json",
    );
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.file).toBe(real("lab6-srm660c-cu.gsas"));
    expect(out.verdict).toBe("consistent");
    // NIST SRM 660c certificate: a = 0.4156826 nm ± 0.000008 nm at 22.5 °C; the lab's temperature and the
    // profile model leave more than that, so within 5e-4 Å (0.012 %; common practice for a lab check).
    expect(Math.abs(out.cell.a - 4.156826)).toBeLessThan(5e-4);
  });

  it("--phase, --candidate and --window: phases, candidates and the window's answer in the JSON line", () => {
    // The real CPD round-robin sample 1g (corundum + fluorite + zincite; tests/data/real/SOURCES.md); cells rounded
    // from the round robin's refinement (tests/diffraction/real-mixtures.cases.ts).
    const r = lattice(
      real("cpd-1g-corundum-fluorite-zincite-cu.prn"),
      "--source",
      "Cu",
      "--system",
      "cubic",
      "--centering",
      "F",
      "--cell",
      "5.4117,5.4117,5.4117,90,90,90",
      "--name",
      "ceria",
      "--candidate",
      "cubic/F/5.4626,5.4626,5.4626,90,90,90/fluorite",
      "--phase",
      "trigonal/R/4.758,4.758,12.989,90,90,120/corundum",
      "--phase",
      "hexagonal/P/3.249,3.249,5.205,90,90,120/zincite",
      "--window",
      "a=0.0005",
      "--json",
    );
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.phases.map((p: { name: string; present: boolean }) => [p.name, p.present])).toEqual([
      ["fluorite", true],
      ["corundum", true],
      ["zincite", true],
    ]);
    expect(out.phases[1].system).toBe("trigonal");
    expect(out.phases[1].esd.a).toBeGreaterThan(0);
    expect(out.candidates.map((c: { name: string; chosen: boolean }) => [c.name, c.chosen])).toEqual([
      ["ceria", false],
      ["fluorite", true],
    ]);
    // The chosen fluorite's declared a = 5.4626 ± 0.0005 Å; the refined value is within that.
    expect(out.withinWindow).toBe(true);
    expect(out.window[0].parameter).toBe("a");
    expect(out).toHaveProperty("wholePattern");
  });

  it("bad --phase, --candidate and --window values are one sentence and exit 2", () => {
    const base = [
      real("cpd-1g-corundum-fluorite-zincite-cu.prn"),
      "--source",
      "Cu",
      "--cell",
      "5.46,5.46,5.46,90,90,90",
      "--system",
      "cubic",
      "--centering",
      "F",
    ];
    const bad = [
      ["--phase", "cubic/F/5.4"],
      ["--phase", "cubical/F/5,5,5,90,90,90"],
      ["--candidate", "hexagonal/P/3.2,3.3,5.2,90,90,120"],
      ["--window", "a=-0.01"],
      ["--window", "c=0.01"],
      ["--window", "a:0.01"],
    ];
    for (const extra of bad) {
      const r = lattice(...base, ...extra, "--json");
      expect(r.code, extra.join(" ")).toBe(2);
      expect(r.stdout).toBe("");
      expect(r.stderr.trim().split("\n")).toHaveLength(1);
    }
  });
});
