// CSV downloads: csvText's quoting and line ends, byte for byte what the peaks and ledger exports wrote by hand before.
import { describe, expect, it } from "vitest";
import { peaksTable } from "~/domain/check-result";
import { csvText } from "~/utils/csv.server";

// The ledger export's former hand-written rule: quote a field holding a comma, a quote, CR or LF; CRLF after
// every row. The peaks table's rule left CR out, which none of its fields (numbers, yes, no) can hold.
function handWritten(rows: unknown[][]): string {
  const field = (v: unknown) => {
    const s = v === null || v === undefined ? "" : String(v);
    return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  return rows.map((r) => r.map(field).join(",")).join("\r\n") + "\r\n";
}

describe("csvText", () => {
  it("quotes commas, quotes, CR and LF, leaves the rest bare, and ends every row with CRLF", () => {
    const rows = [
      ["plain", "a,b", 'say "hi"', "two\nlines", "cr\ronly", "crlf\r\nin", "", null, undefined, 0, -1500, 1.5e-7, "'=SUM(A1)"],
      ["second", 3.141592653589793],
    ];
    expect(csvText(rows)).toBe('plain,"a,b","say ""hi""","two\nlines","cr\ronly","crlf\r\nin",,,,0,-1500,1.5e-7,\'=SUM(A1)\r\nsecond,3.141592653589793\r\n');
  });

  it("matches the former hand-written quoting on random fields", () => {
    const alphabet = ["a", "Z", "1", "-", ",", '"', "\n", "\r", " ", "=", "é", "'"];
    let seed = 7;
    const next = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31);
    for (let t = 0; t < 300; t++) {
      const rows = Array.from({ length: 1 + (next() % 4) }, () =>
        Array.from({ length: 1 + (next() % 5) }, () => Array.from({ length: next() % 6 }, () => alphabet[next() % alphabet.length]).join("")),
      );
      expect(csvText(rows)).toBe(handWritten(rows));
    }
  });

  it("writes the peaks table as before: numbers as JavaScript prints them, empty cells for unindexed peaks", () => {
    const peak = {
      twoTheta: 28.44,
      twoThetaEsd: 0.0012,
      d: 3.1356,
      intensity: 812.5,
      relativeIntensity: 100,
      height: 9000,
      fwhm: 0.08,
      eta: 0.41,
      usedInRefinement: true,
      crystalliteSizeNm: null,
    };
    const peaks = [
      { ...peak, hkl: [1, 1, 1] as [number, number, number], twoThetaCalc: 28.4411, delta: -0.0011 },
      { ...peak, hkl: null, twoTheta: 31.2, usedInRefinement: false, crystalliteSizeNm: 41.25 },
    ];
    const csv = csvText(peaksTable({ peaks }));
    expect(csv).toBe(handWritten(peaksTable({ peaks })));
    expect(csv.split("\r\n")[1]).toBe("1,1,1,1,3.1356,28.44,0.0012,28.4411,-0.0011,812.5,100,0.08,0.41,yes,");
    expect(csv.split("\r\n")[2]).toBe("2,,,,3.1356,31.2,0.0012,,,812.5,100,0.08,0.41,no,41.25");
  });
});
