// Reading scans: every accepted layout and every refusal of the issue, each refusal one sentence.
// Sources: each expected value is a number written in the test's own input text (hand-made files), so the
// checks are of reading, not of computation; pdCIF data names follow the pdCIF dictionary (common practice).
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { cifNumber, MIN_POINTS, parseScan } from "~/diffraction/parse-scan";

// A small synthetic scan: 2θ 10…(10 + 0.02·(n−1)), one Gaussian peak at 20° on a flat 100 counts.
function points(n = 400): { x: number[]; y: number[] } {
  const x = Array.from({ length: n }, (_, i) => +(10 + 0.02 * i).toFixed(2));
  const y = x.map((t) => Math.round(100 + 5000 * Math.exp(-(((t - 14) / 0.05) ** 2))));
  return { x, y };
}

function ok(text: string, fileName?: string) {
  const r = parseScan(text, { fileName });
  if (!r.ok) throw new Error(`expected a scan, got: ${r.error}`);
  return r.scan;
}

function refused(text: string, options: Parameters<typeof parseScan>[1] = {}): string {
  const r = parseScan(text, options);
  if (r.ok) throw new Error("expected a refusal");
  // One clear sentence: ends with a full stop, no line breaks.
  expect(r.error).toMatch(/^[A-Z0-9].*[.]$/);
  expect(r.error).not.toContain("\n");
  return r.error;
}

describe("two- and three-column text", () => {
  const { x, y } = points();
  it("reads spaces, tabs and a header of comment and text lines with CRLF endings", () => {
    const text = ["# Diffractory test scan", "! instrument: none", "Sample: quartz", ...x.map((t, i) => `${t}\t${y[i]}`)].join("\r\n");
    const scan = ok(text);
    expect(scan.format).toBe("xy");
    expect(scan.twoTheta.length).toBe(x.length);
    expect(scan.twoTheta[1]).toBeCloseTo(10.02, 12);
    expect(scan.intensity[200]).toBe(y[200]);
  });

  it("reads a third column as the intensity esd", () => {
    const scan = ok(x.map((t, i) => `${t} ${y[i]} ${Math.sqrt(y[i]).toFixed(3)}`).join("\n"));
    expect(scan.esd).toBeDefined();
    expect(scan.esd![0]).toBeCloseTo(10, 3);
  });

  it("reads decimal commas with a semicolon separator (12,5;340)", () => {
    const scan = ok(x.map((t, i) => `${String(t).replace(".", ",")};${y[i]}`).join("\n"));
    expect(scan.twoTheta[1]).toBeCloseTo(10.02, 12);
    expect(scan.intensity[1]).toBe(y[1]);
  });

  it("reads decimal commas with a blank separator (12,5 340)", () => {
    const scan = ok(x.map((t, i) => `${t.toFixed(2).replace(".", ",")} ${y[i]},5`).join("\n"));
    expect(scan.twoTheta.length).toBe(x.length);
    expect(scan.twoTheta[3]).toBeCloseTo(10.06, 12);
    expect(scan.intensity[3]).toBe(y[3] + 0.5);
  });

  it("reads commas as separators when the decimals are points (12.5,340)", () => {
    const scan = ok(x.map((t, i) => `${t.toFixed(2)},${y[i]}`).join("\n"));
    expect(scan.twoTheta[3]).toBeCloseTo(10.06, 12);
    expect(scan.intensity[3]).toBe(y[3]);
  });

  it("reverses a descending scan and says so", () => {
    const scan = ok(
      x
        .map((t, i) => `${t} ${y[i]}`)
        .reverse()
        .join("\n"),
    );
    expect(scan.twoTheta[0]).toBeCloseTo(10, 12);
    expect(scan.intensity[scan.intensity.length - 1]).toBe(y[y.length - 1]);
    expect(scan.warnings.join(" ")).toMatch(/reversed/);
  });

  it("drops a few missing rows with a warning", () => {
    const rows = x.map((t, i) => (i % 50 === 7 ? `${t} NaN` : `${t} ${y[i]}`));
    const scan = ok(rows.join("\n"));
    expect(scan.twoTheta.length).toBe(x.length - 8);
    expect(scan.warnings.join(" ")).toMatch(/missing/);
  });
});

describe("number reading", () => {
  it("reads every decimal exactly as Number() does (property)", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 6 }),
        fc.array(fc.tuple(fc.integer({ min: 1, max: 200 }), fc.integer({ min: -(10 ** 12), max: 10 ** 12 }), fc.integer({ min: 0, max: 6 })), {
          minLength: MIN_POINTS,
          maxLength: MIN_POINTS + 20,
        }),
        (angleDecimals, rows) => {
          // Angles 10° upward in steps of 1–200 units of the last decimal place (strictly ascending,
          // below 180°); intensities any signed decimal of up to 6 places.
          let units = 10 * 10 ** angleDecimals;
          const lines = rows.map(([step, y, yDecimals]) => {
            units += step;
            return `${(units / 10 ** angleDecimals).toFixed(angleDecimals)} ${(y / 10 ** yDecimals).toFixed(yDecimals)}`;
          });
          const r = parseScan(lines.join("\n"));
          if (!r.ok) return /no peaks/.test(r.error);
          return lines.every((line, i) => {
            const [t, v] = line.split(" ");
            return r.scan.twoTheta[i] === Number(t) && r.scan.intensity[i] === Number(v);
          });
        },
      ),
      { numRuns: 80 },
    );
  });

  it("reads exponent notation, long mantissas and blanks around fields as Number() does (common practice)", () => {
    const { x, y } = points();
    const angles = x.map((t, i) => (i % 3 === 0 ? t.toFixed(16) : i % 3 === 1 ? t.toExponential(3) : String(t)));
    const counts = y.map((v, i) => (i % 2 === 0 ? v.toExponential(4).toUpperCase() : `+${v}`));
    for (const sep of [" ", " ; ", "\t"]) {
      const scan = ok(angles.map((t, i) => `${t}${sep}${counts[i]}`).join("\n"));
      expect(Array.from(scan.twoTheta)).toEqual(angles.map(Number));
      expect(Array.from(scan.intensity)).toEqual(counts.map(Number));
    }
  });
});

describe("CSV with a header row", () => {
  const { x, y } = points();
  it("finds the 2θ and intensity columns by name, in any order", () => {
    const text = ["Intensity (counts),ESD,2Theta (deg)", ...x.map((t, i) => `${y[i]},${Math.sqrt(y[i]).toFixed(2)},${t}`)].join("\n");
    const scan = ok(text, "scan.csv");
    expect(scan.format).toBe("csv");
    expect(scan.twoTheta[0]).toBe(10);
    expect(scan.intensity[0]).toBe(y[0]);
    expect(scan.esd![0]).toBeCloseTo(10, 2);
  });

  it("reads a semicolon CSV with decimal commas and a header", () => {
    const text = ["Angle;Counts", ...x.map((t, i) => `${t.toFixed(2).replace(".", ",")};${y[i]}`)].join("\r\n");
    const scan = ok(text);
    expect(scan.format).toBe("csv");
    expect(scan.twoTheta[5]).toBeCloseTo(10.1, 12);
  });
});

describe("pdCIF", () => {
  const { x, y } = points();
  it("reads a _pd_meas_2theta_scan loop with esds in parentheses and the wavelength", () => {
    const text = [
      "data_test",
      "_diffrn_radiation_wavelength 1.540593",
      "loop_",
      "_pd_meas_2theta_scan",
      "_pd_meas_counts_total",
      ...x.map((t, i) => `${t} ${y[i]}(${Math.round(Math.sqrt(y[i]))})`),
    ].join("\n");
    const scan = ok(text);
    expect(scan.format).toBe("pdcif");
    expect(scan.wavelength).toBeCloseTo(1.540593, 9);
    expect(scan.intensity[0]).toBe(y[0]);
    expect(scan.esd![0]).toBe(10);
  });

  it("reads the 2θ range (min/max/inc) with a _pd_proc_intensity_total loop", () => {
    const text = [
      "data_range",
      "_pd_meas_2theta_range_min 10.00",
      `_pd_meas_2theta_range_max ${x[x.length - 1]}`,
      "_pd_meas_2theta_range_inc 0.02",
      "loop_",
      "_pd_proc_intensity_total",
      ...y.map((v) => `${v}.0`),
    ].join("\n");
    const scan = ok(text);
    expect(scan.twoTheta.length).toBe(x.length);
    expect(scan.twoTheta[x.length - 1]).toBeCloseTo(x[x.length - 1], 9);
    expect(scan.esd).toBeUndefined();
  });

  it("reads _pd_meas_intensity_total and a wavelength loop", () => {
    const text = [
      "data_loop",
      "loop_ _diffrn_radiation_wavelength_id _diffrn_radiation_wavelength",
      "1 0.709317",
      "2 0.713607",
      "loop_ _pd_meas_2theta_scan _pd_meas_intensity_total",
      ...x.map((t, i) => `${t} ${y[i]}`),
    ].join("\n");
    const scan = ok(text);
    expect(scan.wavelength).toBeCloseTo(0.709317, 9);
  });

  it("reads CIF numbers with standard uncertainties (CIF convention: last digits)", () => {
    expect(cifNumber("1234(35)")).toEqual({ value: 1234, su: 35 });
    const v = cifNumber("1.234(5)");
    expect(v.value).toBeCloseTo(1.234, 12);
    expect(v.su).toBeCloseTo(0.005, 12);
    expect(Number.isNaN(cifNumber("?").value)).toBe(true);
  });
});

describe("refusals, one sentence each", () => {
  const { x, y } = points();
  const good = x.map((t, i) => `${t} ${y[i]}`);

  it("empty file", () => {
    expect(refused("")).toMatch(/empty/);
    expect(refused("  \n\r\n ")).toMatch(/empty/);
  });

  it("binary file (NUL bytes, or mostly control characters)", () => {
    expect(refused("PK\u0003\u0004\u0000\u0000abc")).toMatch(/binary/);
    expect(refused("\u0001\u0002\u0003\u0004\u0005\u0006\u0007\u0008".repeat(100))).toMatch(/binary/);
  });

  it("too few points, stating the minimum", () => {
    const error = refused(good.slice(0, 10).join("\n"));
    expect(error).toContain(String(MIN_POINTS));
  });

  it("no numeric columns", () => {
    expect(refused("this is a report\nwith words only\nand no numbers at all")).toMatch(/no numeric columns/);
    expect(refused(x.map((t) => `${t}`).join("\n"))).toMatch(/no numeric columns/);
  });

  it("mostly missing numbers", () => {
    expect(refused(x.map((t, i) => (i % 2 ? `${t} NaN` : `${t} ${y[i]}`)).join("\n"))).toMatch(/missing/);
  });

  it("shuffled angles", () => {
    const shuffled = [...good];
    [shuffled[100], shuffled[200]] = [shuffled[200], shuffled[100]];
    expect(refused(shuffled.join("\n"))).toMatch(/out of order/);
  });

  it("duplicated angles", () => {
    const doubled = [...good.slice(0, 150), good[149], ...good.slice(150)];
    expect(refused(doubled.join("\n"))).toMatch(/appears twice/);
  });

  it("a constant intensity (flat line)", () => {
    expect(refused(x.map((t) => `${t} 100`).join("\n"))).toMatch(/no peaks/);
  });

  it("over the size limit, stating the limit", () => {
    expect(refused(good.join("\n"), { maxBytes: 1024 })).toMatch(/1 kB limit/);
    const big = "1 1\n".repeat(13_200_000);
    expect(refused(big)).toMatch(/50 MB limit/);
  });

  it("angles that are not 2θ in degrees", () => {
    expect(refused(x.map((t, i) => `${t * 100} ${y[i]}`).join("\n"))).toMatch(/between 0° and 180°/);
  });

  it("a CIF without a powder loop", () => {
    expect(refused("data_x\n_cell_length_a 5.43\n_pd_block_id x\n")).toMatch(/powder-pattern loop/);
  });
});
