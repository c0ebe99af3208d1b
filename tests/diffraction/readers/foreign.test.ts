// Files that are not scans, named in one sentence by their first bytes. The signatures are the formats' published
// magic numbers (common practice, from memory; docs/scan-formats.md#files-that-are-not-scans lists them). The files
// are made by the test: a signature followed by filler, which is all the check looks at.
import { describe, expect, it } from "vitest";
import { parseScan } from "~/diffraction/parse-scan";
import { READERS } from "~/diffraction/readers/index";

function bytes(...parts: (string | number[])[]): Uint8Array {
  const out: number[] = [];
  for (const p of parts) {
    if (typeof p === "string") for (const c of p) out.push(c.charCodeAt(0) & 0xff);
    else out.push(...p);
  }
  // Filler of NUL and binary noise, as the rest of such a file would be.
  for (let i = 0; i < 400; i++) out.push((i * 37) % 256);
  return Uint8Array.from(out);
}

function sentence(input: Uint8Array | string): string {
  const r = parseScan(input, { fileName: "upload.dat" });
  if (r.ok) throw new Error(`expected a refusal, got a ${r.scan.format} scan`);
  // One sentence: a capital, one full stop at the end, no line break.
  expect(r.error).toMatch(/^[A-Z][^\n]*\.$/);
  expect(r.error.slice(0, -1)).not.toMatch(/\.\s/);
  return r.error;
}

describe("files that are not scans", () => {
  it("names images, and a TIFF as a possible detector frame to integrate", () => {
    expect(sentence(bytes([0x89], "PNG", [0x0d, 0x0a, 0x1a, 0x0a]))).toMatch(/PNG image/);
    expect(sentence(bytes([0xff, 0xd8, 0xff, 0xe0]))).toMatch(/JPEG image/);
    expect(sentence(bytes("GIF89a"))).toMatch(/GIF image/);
    expect(sentence(bytes("BM", [0x36, 0, 0, 0, 0, 0, 0, 0, 0x36, 0, 0, 0, 40, 0, 0, 0]))).toMatch(/BMP image/);
    expect(sentence(bytes("RIFF", [0, 0, 0, 0], "WEBPVP8 "))).toMatch(/WebP image/);
    expect(sentence(bytes("II*", [0]))).toMatch(/TIFF image.*2-D detector.*integrate/);
    expect(sentence(bytes("MM", [0, 42]))).toMatch(/TIFF/);
  });

  it("names PDF, office files and archives, advising CSV for spreadsheets", () => {
    expect(sentence(bytes("%PDF-1.7\n"))).toMatch(/PDF document/);
    expect(sentence(bytes("PK", [3, 4, 20, 0, 6, 0], "[Content_Types].xml", "xl/workbook.xml"))).toMatch(/Excel spreadsheet.*save the sheet as CSV/);
    expect(sentence(bytes("PK", [3, 4, 20, 0, 0, 0], "mimetypeapplication/vnd.oasis.opendocument.spreadsheet"))).toMatch(/OpenDocument spreadsheet.*CSV/);
    expect(sentence(bytes("PK", [3, 4, 20, 0, 6, 0], "[Content_Types].xml", "word/document.xml"))).toMatch(/Word document/);
    expect(sentence(bytes("PK", [3, 4, 10, 0, 0, 0], "scan.xy"))).toMatch(/ZIP archive.*unpack/);
    expect(sentence(bytes([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]))).toMatch(/old Microsoft Office.*CSV/);
    expect(sentence(bytes([0x1f, 0x8b, 8, 0]))).toMatch(/gzip archive/);
    expect(sentence(bytes([0x37, 0x7a, 0xbc, 0xaf, 0x27, 0x1c]))).toMatch(/7z archive/);
    expect(sentence(bytes("Rar!", [0x1a, 7, 0]))).toMatch(/RAR archive/);
  });

  it("names executables, web pages, JSON and a GSAS instrument parameter file", () => {
    expect(sentence(bytes("MZ", [0x90, 0, 3, 0, 0, 0]))).toMatch(/executable program/);
    expect(sentence(bytes([0x7f], "ELF", [2, 1, 1, 0]))).toMatch(/executable program/);
    expect(sentence("<!DOCTYPE html>\n<html><body>scan</body></html>")).toMatch(/web page \(HTML\)/);
    expect(sentence('{"twoTheta": [10, 10.02], "intensity": [5, 6]}')).toMatch(/JSON data/);
    const prm = ["            123456789012345678901234567890", "INS   BANK      1", "INS   HTYPE   PXCR", "INS  1 IRAD     3"].join("\r\n");
    expect(sentence(prm)).toMatch(/GSAS instrument parameter file/);
  });

  it("refuses a binary file of no known format with the list of formats read", () => {
    const error = sentence(Uint8Array.from({ length: 2000 }, (_, i) => (i * 131 + 7) % 256));
    expect(error).toMatch(/^The file is binary and in no scan format Diffractory reads; it reads /);
    for (const r of READERS) expect(error).toContain(r.label);
  });

  it("does not take text that merely starts like a signature for a foreign file", () => {
    // "BM" and "MZ" open ordinary words; a scan whose title starts with them is still a scan.
    const rows = Array.from({ length: 100 }, (_, i) => `${(10 + 0.02 * i).toFixed(2)} ${100 + (i === 50 ? 900 : i % 7)}`);
    for (const title of ["BM-7 sample", "MZ powder", "[Header]"]) {
      const r = parseScan([`# ${title}`, ...rows].join("\n").replace("# ", ""));
      expect(r.ok, title).toBe(true);
    }
  });
});
