// The storage-key and file-name rules on their own: keys compared segment by segment, names without control
// characters, and a download header that stays one line whatever the stored name holds.
import { describe, expect, it } from "vitest";
import { attachmentDisposition, FILE_NAME_CONTROL, FileNameSchema, fileNameProblem, isKeyUnder, keySegmentFor, keySegments } from "~/domain/storage-keys";

const ORG = "6f1c2a4e-7d3b-4b8e-9a51-0c2d3e4f5a6b";
const REQ = "0b9e8d7c-6a5f-4e3d-8c2b-1a0f9e8d7c6b";
const PREFIX = `requests/${ORG}/${REQ}/sds`;
const OTHER = "requests/3a2b1c0d-9e8f-4a7b-8c6d-5e4f3a2b1c0d/11111111-2222-4333-8444-555555555555/sds/u/their-sheet.pdf";

describe("isKeyUnder", () => {
  it("takes a key the app makes under the prefix", () => {
    expect(isKeyUnder(`${PREFIX}/9d7c2c1e-4a4b-4c1d-9e8f-7a6b5c4d3e2f/lfp-12-sds.pdf`, PREFIX)).toBe(true);
    expect(isKeyUnder(`${PREFIX}/upload-1/sheet.v2.pdf`, PREFIX)).toBe(true);
  });

  it("refuses a key that starts with the prefix and climbs out of it", () => {
    expect(`${PREFIX}/../../../${OTHER.slice("requests/".length)}`.startsWith(`${PREFIX}/`)).toBe(true);
    expect(isKeyUnder(`${PREFIX}/../../../${OTHER.slice("requests/".length)}`, PREFIX)).toBe(false);
    expect(isKeyUnder(`${PREFIX}/x/../../../../${OTHER}`, PREFIX)).toBe(false);
  });

  it.each([
    ["a dot segment", `${PREFIX}/./sheet.pdf`],
    ["a trailing ..", `${PREFIX}/u/sheet.pdf/..`],
    ["three dots", `${PREFIX}/.../sheet.pdf`],
    ["an empty segment", `${PREFIX}//sheet.pdf`],
    ["a trailing slash", `${PREFIX}/u/`],
    ["a leading slash", `/${PREFIX}/u/sheet.pdf`],
    ["a backslash", `${PREFIX}/..\\..\\sheet.pdf`],
    ["a percent escape", `${PREFIX}/%2e%2e/%2e%2e/sheet.pdf`],
    ["CR/LF", `${PREFIX}/u/sheet\r\n.pdf`],
    ["a NUL", `${PREFIX}/u/sheet\u0000.pdf`],
    ["a tab", `${PREFIX}/u/sheet\t.pdf`],
    ["a space", `${PREFIX}/u/my sheet.pdf`],
    ["letters beyond ASCII", `${PREFIX}/u/sheet\u00e4.pdf`],
    ["nothing after the prefix", PREFIX],
    ["only a slash after the prefix", `${PREFIX}/`],
    ["a sibling folder with the same start", `${PREFIX}-elsewhere/u/sheet.pdf`],
    ["another organisation's key", OTHER],
    ["an empty key", ""],
    ["a key longer than 400 characters", `${PREFIX}/${"a".repeat(400)}.pdf`],
  ])("refuses %s", (_, key) => {
    expect(isKeyUnder(key, PREFIX)).toBe(false);
  });

  it("refuses when the prefix itself is not plain segments", () => {
    expect(isKeyUnder("requests/a/../b/sheet.pdf", "requests/a/..")).toBe(false);
    expect(isKeyUnder("x/sheet.pdf", "")).toBe(false);
  });
});

describe("keySegmentFor and keySegments", () => {
  it("turns any file name into one plain segment that keeps the name readable", () => {
    expect(keySegmentFor("LFP-12 safety sheet (v2).pdf")).toBe("LFP-12_safety_sheet_v2_.pdf");
    expect(keySegmentFor("../../etc/passwd.xy")).toBe(".._.._etc_passwd.xy");
    expect(keySegmentFor("..")).toBe("file");
    expect(keySegmentFor("")).toBe("file");
    expect(keySegmentFor("a\r\nb.xy")).toBe("a_b.xy");
    expect(keySegmentFor(`${"x".repeat(300)}.xy`)).toHaveLength(120);
    for (const name of ["..", ".", "../x", "a/b\\c", "结晶.xy", "\u0000"]) expect(keySegments(`p/${keySegmentFor(name)}`)).not.toBeNull();
  });
});

describe("fileNameProblem", () => {
  it("accepts ordinary names, spaces, quotes and letters beyond ASCII", () => {
    for (const name of ["scan.xy", "LFP-12 run 3.xye", 'Intensität "Si" 結晶.xy', "a".repeat(200)]) expect(fileNameProblem(name)).toBeNull();
  });

  it.each([
    ["CR/LF", "scan\r\nX-Injected: yes.xy"],
    ["a line feed", "scan\n.xy"],
    ["a tab", "scan\t.xy"],
    ["a NUL", "scan\u0000.xy"],
    ["DEL", "scan\u007f.xy"],
    ["a C1 control", "scan\u0085.xy"],
    ["a Unicode line separator", "scan\u2028.xy"],
    ["a right-to-left override", "scan\u202efdp.xy"],
  ])("refuses %s", (_, name) => {
    expect(fileNameProblem(name)).toBe(FILE_NAME_CONTROL);
  });

  it("refuses folders, an empty name and more than 200 characters", () => {
    expect(fileNameProblem("../../etc/passwd.xy")).toMatch(/without folders/);
    expect(fileNameProblem("C:\\scans\\a.xy")).toMatch(/without folders/);
    expect(fileNameProblem("")).toMatch(/at most 200 characters/);
    expect(fileNameProblem("a".repeat(201))).toMatch(/at most 200 characters/);
  });

  it("in a form, trims the name first", () => {
    expect(FileNameSchema.parse("  sheet.pdf  ")).toBe("sheet.pdf");
    expect(FileNameSchema.safeParse("sheet\r\n.pdf").error?.issues[0].message).toBe(FILE_NAME_CONTROL);
  });
});

describe("attachmentDisposition", () => {
  it("names the file in ASCII and exactly in UTF-8", () => {
    expect(attachmentDisposition("scan.xy")).toBe(`attachment; filename="scan.xy"; filename*=UTF-8''scan.xy`);
    const header = attachmentDisposition('Intensität "Si" 結晶 (1).xy');
    expect(header).toMatch(/^attachment; filename="Intensit_t _Si_ __ \(1\)\.xy"; filename\*=UTF-8''/);
    expect(decodeURIComponent(header.split("filename*=UTF-8''")[1])).toBe('Intensität "Si" 結晶 (1).xy');
  });

  it("stays one line of visible ASCII whatever the stored name holds", () => {
    for (const name of ["old\r\nX-Injected: yes.xy", "a\u0000b", "\\\\server\\share.xy", "%0d%0a.xy", "\u2028", ""]) {
      const header = attachmentDisposition(name);
      expect(header).toMatch(/^[\x20-\x7e]+$/);
      expect(header).toMatch(/^attachment; filename="[^"\\]*"; filename\*=UTF-8''[A-Za-z0-9%!._~-]*$/);
    }
  });
});
