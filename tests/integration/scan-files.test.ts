// Scan files in every format the readers take, delivered through the instrument-computer API: each is read at
// the upload (its format and what it states kept with the file), files that are no scan are refused with one
// sentence and nothing kept, the file's own radiation is used by the check and a source other than the quote's
// instrument is put before the lab, and results stored before any of this still render.
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { StoredCheckResult } from "~/domain/check-result";
import type { ScanInfo } from "~/domain/measurement";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { callRoute, formRequest, getRequest, jsonRequest, sessionCookies } from "./route-call";
import { cpi, gsasFxye, ras, rawVersion3 } from "../diffraction/readers/write-formats";

// Certified lattice parameter of silicon, NIST SRM 640c: a = 5.4311946 Å (docs/reference-values.md#certified-lattice-parameters).
const SI_A = 5.4311946;
// Kα1, Kα2, Kβ in Å as tabulated in docs/reference-values.md#x-ray-wavelengths (NIST, Deslattes et al. 2003).
const LINES = {
  Cu: { kAlpha1: 1.540593, kAlpha2: 1.544427, kBeta: 1.392234 },
  Co: { kAlpha1: 1.788996, kAlpha2: 1.792835, kBeta: 1.620826 },
} as const;

let w: MoneyWorld;
let app: Awaited<ReturnType<typeof loadApp>>;
const as = sessionCookies();

async function loadApp() {
  return {
    tokens: await import("~/routes/lab/api-tokens"),
    v1Start: await import("~/routes/api/v1/order-files"),
    v1Complete: await import("~/routes/api/v1/order-file-complete"),
    uploads: await import("~/routes/lab/order-uploads"),
    upload: await import("~/routes/lab/order-upload"),
    labFiles: await import("~/routes/lab/order-files"),
    checkScreen: await import("~/routes/check"),
    resultJson: await import("~/routes/check-result-json"),
    scanCheck: await import("~/models/checks/scan-check.server"),
    storage: await import("~/models/files/storage.server"),
    simulate: await import("~/diffraction/simulate"),
    structures: await import("~/diffraction/structures"),
    scherrer: await import("~/diffraction/scherrer"),
    boss: await import("~/jobs/queues.server"),
  };
}

const sha256 = (bytes: string | Uint8Array) => createHash("sha256").update(bytes).digest("hex");
const bytesOf = (body: string | Uint8Array) => (typeof body === "string" ? new TextEncoder().encode(body) : body);

// ——— Scan files written here, each from the format's published layout (docs/scan-formats.md) ———

type Anode = keyof typeof LINES;

/** Silicon (SRM 640c's certified a) measured with the anode's Kα doublet, 20–120° 2θ in steps of 0.02°. */
function silicon(anode: Anode, { flat = false } = {}) {
  const sim = app.simulate.simulatePattern({
    structure: app.structures.SILICON,
    cell: { a: SI_A, b: SI_A, c: SI_A, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode, monochromation: "k_alpha_doublet" },
    twoThetaMin: 20,
    twoThetaMax: 120,
    step: 0.02,
    scale: flat ? 0 : 10_000,
    background: { constant: 120 },
    noise: { seed: 11 },
  });
  return { twoTheta: Array.from(sim.twoTheta), counts: Array.from(sim.intensity, (v) => Math.max(0, Math.round(v))) };
}

/** XRDML (XML) with the tube, wavelengths, slits, sample and instrument stated (element names: docs/scan-formats.md#xrdml). */
function xrdml(anode: Anode, scan = silicon(anode)) {
  const l = LINES[anode];
  const first = scan.twoTheta[0];
  const last = scan.twoTheta[scan.twoTheta.length - 1];
  return `<?xml version="1.0" encoding="UTF-8"?>
<xrdMeasurements xmlns="http://www.xrdml.com/XRDMeasurement/1.5" status="Completed">
  <sample type="To be analyzed"><id>S-7</id><name>Invented silicon lot 7</name></sample>
  <xrdMeasurement measurementType="Scan" status="Completed" sampleMode="Reflection">
    <usedWavelength intended="K-Alpha 1">
      <kAlpha1 unit="Angstrom">${l.kAlpha1}</kAlpha1>
      <kAlpha2 unit="Angstrom">${l.kAlpha2}</kAlpha2>
      <kBeta unit="Angstrom">${l.kBeta}</kBeta>
      <ratioKAlpha2KAlpha1>0.5000</ratioKAlpha2KAlpha1>
    </usedWavelength>
    <incidentBeamPath>
      <radius unit="mm">240.00</radius>
      <xRayTube id="1" name="Invented tube"><tension unit="kV">40</tension><current unit="mA">30</current><anodeMaterial>${anode}</anodeMaterial></xRayTube>
      <divergenceSlit id="5" name="Fixed slit 1/4°"><height unit="mm">0.38</height></divergenceSlit>
    </incidentBeamPath>
    <scan appendNumber="0" mode="Continuous" scanAxis="Gonio" status="Completed">
      <header>
        <startTimeStamp>2026-11-20T09:30:00+01:00</startTimeStamp>
        <source><instrumentID>INVENTED-0042</instrumentID></source>
      </header>
      <dataPoints>
        <positions axis="2Theta" unit="deg"><startPosition>${first}</startPosition><endPosition>${last}</endPosition></positions>
        <commonCountingTime unit="seconds">0.50</commonCountingTime>
        <counts unit="counts">${scan.counts.join(" ")}</counts>
      </dataPoints>
    </scan>
  </xrdMeasurement>
</xrdMeasurements>
`;
}

/** GSAS standard powder data: title, `BANK 1 NCHAN NREC CONST start step 0 0 STD`, ten 8-character fields per record (centidegrees). */
function gsas(scan = silicon("Cu")) {
  const n = scan.counts.length;
  const records: string[] = [];
  for (let i = 0; i < n; i += 10) {
    records.push(
      scan.counts
        .slice(i, i + 10)
        .map((c) => `  ${String(Math.min(c, 999_999)).padStart(6)}`)
        .join("")
        .padEnd(80),
    );
  }
  const start = (scan.twoTheta[0] * 100).toFixed(2);
  const lines = ["Invented silicon lot 7".padEnd(80), `BANK 1 ${n} ${records.length} CONST ${start} 2.00 0 0 STD`.padEnd(80), ...records];
  return `${lines.join("\r\n")}\r\n`;
}

/** A binary RD file (version 3): mark, anode code, Kα1, Kα2, ratio, sample name, step/start/end as float64, counts packed as √(100·counts) in 16 bits. */
function philipsRd(scan = silicon("Cu")) {
  const n = scan.counts.length;
  const bytes = new Uint8Array(250 + 2 * n);
  const view = new DataView(bytes.buffer);
  bytes.set(new TextEncoder().encode("V3RD"), 0);
  bytes[84] = 5; // X'Pert MPD in the layout's list
  bytes[85] = 0; // Cu
  view.setFloat64(94, LINES.Cu.kAlpha1, true);
  view.setFloat64(102, LINES.Cu.kAlpha2, true);
  view.setFloat64(110, 0.5, true);
  bytes.set(new TextEncoder().encode("INVENTED SI LOT 7"), 146);
  view.setFloat64(214, 0.02, true);
  view.setFloat64(222, scan.twoTheta[0], true);
  view.setFloat64(230, scan.twoTheta[n - 1], true);
  // 16 bits hold √(100·counts) up to 65535, so the counts are scaled to stay below 42 000.
  const top = Math.max(...scan.counts);
  scan.counts.forEach((c, i) => view.setUint16(250 + 2 * i, Math.round(Math.sqrt(100 * c * Math.min(1, 40_000 / top))), true));
  return bytes;
}

/** Files that are no scan: a PNG's signature, a PDF's opening, an .xlsx (ZIP holding xl/), and random bytes. */
function foreignFiles() {
  const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, ...new Array(200).fill(7)]);
  const pdf = new TextEncoder().encode("%PDF-1.7\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n");
  const xlsx = new Uint8Array([0x50, 0x4b, 0x03, 0x04, 20, 0, 0, 0, 8, 0, ...new TextEncoder().encode("xl/workbook.xml"), ...new Array(100).fill(0)]);
  let seed = 12345;
  const random = new Uint8Array(4096).map(() => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) >> 16) & 0xff);
  return [
    { name: "pattern.xy", body: png, says: /PNG image/ },
    { name: "report.dat", body: pdf, says: /PDF document/ },
    { name: "table.csv", body: xlsx, says: /Excel spreadsheet/ },
    { name: "scan.raw", body: random, says: /./ },
  ];
}

// ——— Uploads ———

async function createToken(name: string) {
  const answer = await callRoute(app.tokens.action, formRequest("/lab/api-tokens", { intent: "create", name }, await as("lab@graniteridge.example")));
  expect(answer.status).toBe(200);
  return (answer.body as { created: { token: string } }).created.token;
}

interface Completed {
  fileId: string;
  state?: string;
  scanFormat?: string;
  scanFormatLabel?: string;
  warnings?: string[];
  error?: string;
}

/** The instrument computer's three steps: start (declaring size and SHA-256), PUT to storage, complete. */
async function apiUpload(token: string, orderId: string, name: string, content: string | Uint8Array) {
  const body = bytesOf(content);
  const auth = { Authorization: `Bearer ${token}` };
  const start = await callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${orderId}/files`, { name, size: body.length, sha256: sha256(body) }, auth), {
    id: orderId,
  });
  expect(start.status, JSON.stringify(start.body)).toBe(201);
  const started = start.body as { fileId: string; upload: { url: string; headers: Record<string, string> }; completeUrl: string };
  const put = await fetch(started.upload.url, { method: "PUT", body: Buffer.from(body), headers: started.upload.headers });
  expect(put.status).toBe(200);
  const done = await callRoute(app.v1Complete.action, new Request(started.completeUrl, { method: "POST", headers: auth }), {
    id: orderId,
    fileId: started.fileId,
  });
  return { status: done.status, body: done.body as Completed, fileId: started.fileId };
}

async function fileRow(fileId: string) {
  const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, fileId));
  return row;
}

/** A paid order in measuring whose quote names Granite Ridge's Cu instrument, with one silicon sample. */
async function cuOrder() {
  const { orderId, sampleId } = await w.measuringOrder({
    label: "SI-7",
    formula: "Si",
    crystalSystem: "cubic",
    centering: "F",
    cellA: 5.431,
    cellB: 5.431,
    cellC: 5.431,
  });
  const [order] = await w.db.select().from(w.schema.orders).where(w.eq(w.schema.orders.id, orderId));
  await w.db.update(w.schema.quotes).set({ instrumentId: cuInstrument.id }).where(w.eq(w.schema.quotes.id, order.quoteId));
  return { orderId, sampleId };
}

let cuInstrument: { id: string; name: string; monochromation: string };

beforeAll(async () => {
  w = await moneyWorld();
  app = await loadApp();
  const [cu] = await w.db
    .select()
    .from(w.schema.instruments)
    .where(w.eq(w.schema.instruments.labId, w.granite.id))
    .then((rows) => rows.filter((r) => r.anode === "Cu"));
  cuInstrument = cu;
});

afterAll(async () => {
  await app?.boss.stopBoss();
  await w?.close();
});

describe("the API upload reads each scan format", () => {
  it("stores two-column text, XRDML, GSAS and a binary RD file, each with its format and what it states", async () => {
    const { orderId } = await cuOrder();
    const token = await createToken("Formats PC");
    const si = silicon("Cu");
    const files = [
      {
        name: "si-lot7.xy",
        content: app.simulate.formatScanAsXy({ twoTheta: Float64Array.from(si.twoTheta), intensity: Float64Array.from(si.counts) }),
        format: "xy",
      },
      { name: "si-lot7.xrdml", content: xrdml("Cu"), format: "xrdml" },
      { name: "si-lot7.gsa", content: gsas(), format: "gsas" },
      { name: "si-lot7.rd", content: philipsRd(), format: "philips-rd" },
    ];
    for (const f of files) {
      const done = await apiUpload(token, orderId, f.name, f.content);
      expect(done.status, `${f.name}: ${JSON.stringify(done.body)}`).toBe(200);
      expect(done.body).toMatchObject({ state: "stored", scanFormat: f.format, warnings: [] });
      const row = await fileRow(done.fileId);
      expect(row).toMatchObject({ state: "stored", scanFormat: f.format, uploadedVia: "api" });
      const info = row.scanInfo as ScanInfo;
      // 20–120° in steps of 0.02° is 5001 points (the files were written so).
      expect(info.points, f.name).toBe(5001);
      expect(info.twoThetaMin).toBeCloseTo(20, 6);
      expect(info.twoThetaMax).toBeCloseTo(120, 6);
      expect(info.formatLabel.length).toBeGreaterThan(2);
    }
    const [xml] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.name, "si-lot7.xrdml"));
    // What the XRDML file states, as it was written above.
    expect((xml.scanInfo as ScanInfo).metadata).toMatchObject({
      anode: "Cu",
      kAlpha1: LINES.Cu.kAlpha1,
      kAlpha2: LINES.Cu.kAlpha2,
      kAlpha2Ratio: 0.5,
      tubeVoltageKv: 40,
      tubeCurrentMa: 30,
      sampleName: expect.stringContaining("Invented silicon lot 7"),
      instrument: expect.stringContaining("INVENTED-0042"),
    });
    const [rd] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.name, "si-lot7.rd"));
    expect((rd.scanInfo as ScanInfo).metadata).toMatchObject({ anode: "Cu", kAlpha1: LINES.Cu.kAlpha1, sampleName: "INVENTED SI LOT 7", step: 0.02 });
  });

  it("stores every other format the readers take: binary raw, pdCIF, GSAS FXYE, CPI, RAS, and real instrument files", async () => {
    const { orderId } = await cuOrder();
    const token = await createToken("More formats PC");
    const si = silicon("Cu");
    const step = 0.02;
    const esd = si.counts.map((c) => Math.sqrt(Math.max(c, 1)));
    const cu = { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" } as const;
    const grid = { twoTheta: Float64Array.from(si.twoTheta), intensity: Float64Array.from(si.counts) };
    const files: { name: string; content: string | Uint8Array; format: string; points: number }[] = [
      // Writers from the published layouts (tests/diffraction/readers/write-formats.ts names each source).
      { name: "si-lot7.raw", content: rawVersion3(20, step, si.counts), format: "bruker-raw", points: 5001 },
      { name: "si-lot7.cif", content: app.simulate.formatScanAsPdCif(grid, cu), format: "pdcif", points: 5001 },
      { name: "si-lot7.fxye", content: gsasFxye(si.twoTheta, si.counts, esd), format: "gsas", points: 5001 },
      {
        name: "si-lot7.cpi",
        content: cpi(si.counts, {
          start: "20",
          end: "120",
          step: "0.02",
          anode: "Cu",
          wavelength: "1.540593",
          date: "20/11/2026",
          time: "1",
          description: "Invented lot 7",
        }),
        format: "cpi",
        points: 5001,
      },
      {
        name: "si-lot7.ras",
        content: ras([
          {
            header: { HW_XG_TARGET_NAME: "Cu", MEAS_SCAN_AXIS_X: "TwoThetaTheta", MEAS_SCAN_STEP: "0.02" },
            rows: si.twoTheta.map((t, i) => [t, si.counts[i], 1] as [number, number, number]),
          },
        ]),
        format: "ras",
        points: 5001,
      },
      // Real measured files (origin and licence in tests/data/real/SOURCES.md), uploaded as the instrument wrote them.
      { name: "na2co2teo6-cu-nifilter.xrdml", content: readFileSync("tests/data/real/na2co2teo6-cu-nifilter.xrdml"), format: "xrdml", points: 3998 },
      { name: "bt86-cu.uxd", content: readFileSync("tests/data/real/bt86-cu.uxd"), format: "uxd", points: 2374 },
      { name: "lab6-srm660c-cu.gsas", content: readFileSync("tests/data/real/lab6-srm660c-cu.gsas"), format: "gsas", points: 8378 },
    ];
    for (const f of files) {
      const done = await apiUpload(token, orderId, f.name, new Uint8Array(typeof f.content === "string" ? new TextEncoder().encode(f.content) : f.content));
      expect(done.status, `${f.name}: ${JSON.stringify(done.body)}`).toBe(200);
      expect(done.body, f.name).toMatchObject({ state: "stored", scanFormat: f.format });
      const row = await fileRow(done.fileId);
      expect(row, f.name).toMatchObject({ state: "stored", scanFormat: f.format, uploadedVia: "api" });
      expect((row.scanInfo as ScanInfo).points, f.name).toBe(f.points);
    }
  });

  it("refuses an image, a PDF, a spreadsheet and random bytes sent as scans with one sentence, keeping nothing", async () => {
    const { orderId } = await cuOrder();
    const token = await createToken("Careless PC");
    for (const f of foreignFiles()) {
      const done = await apiUpload(token, orderId, f.name, f.body);
      expect(done.status, f.name).toBe(422);
      expect(done.body.state).toBe("rejected");
      // One sentence: a capital first, a full stop last, no line break.
      expect(done.body.error, f.name).toMatch(/^[A-Z][^\n]*\.$/);
      expect(done.body.error).toMatch(f.says);
      const row = await fileRow(done.fileId);
      expect(row).toMatchObject({ state: "rejected", rejectReason: done.body.error, scanFormat: null, scanInfo: null });
      // The bytes are gone from storage, and no check was queued.
      await expect(app.storage.readStoredBytes(row.storageKey)).rejects.toThrow();
      expect(await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, done.fileId))).toEqual([]);
    }
    // A name outside the scan formats is refused before any upload, naming what is accepted.
    const start = await callRoute(
      app.v1Start.action,
      jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "photo.png", size: 200 }, { Authorization: `Bearer ${token}` }),
      { id: orderId },
    );
    expect(start.status).toBe(400);
    expect((start.body as { error: string }).error).toMatch(/^Upload a text scan file \(.+\) or an instrument's scan file \(.*\.xrdml.*\.raw.*\)\.$/);
    // A scan above the size the check reads is refused at the start, before any byte is sent.
    const big = await callRoute(
      app.v1Start.action,
      jsonRequest(`/api/v1/orders/${orderId}/files`, { name: "long.xy", size: 60 * 1024 * 1024 }, { Authorization: `Bearer ${token}` }),
      { id: orderId },
    );
    expect(big.status).toBe(413);
    expect((big.body as { error: string }).error).toMatch(/a scan is read whole by the check, so it may be at most 52\.4 MB/);
  });
});

describe("the file's radiation", () => {
  it("a Co file on a Cu quote: the lab is told at the upload and on its delivery screen, and the check uses Co", async () => {
    const { orderId } = await cuOrder();
    const token = await createToken("Co PC");
    const done = await apiUpload(token, orderId, "si-co.xrdml", xrdml("Co"));
    expect(done.status).toBe(200);
    const mismatch = `This file was measured with Co Kα (1.789 Å) but the quote names the Cu Kα (1.541 Å) instrument “${cuInstrument.name}”; the check used the file's radiation.`;
    expect(done.body.warnings).toEqual([mismatch]);

    // The delivery screen, before anything is marked delivered.
    const page = await callRoute(app.labFiles.loader, getRequest(`/lab/orders/${orderId}/files`, await as("lab@graniteridge.example")), { id: orderId });
    expect(page.status).toBe(200);
    const rows = (page.body as { files: { id: string; radiationMismatch: string | null; scanInfo: ScanInfo | null }[] }).files;
    const row = rows.find((r) => r.id === done.fileId)!;
    expect(row.radiationMismatch).toBe(mismatch);
    expect(row.scanInfo?.metadata).toMatchObject({ anode: "Co", tubeVoltageKv: 40 });

    // The check: silicon simulated with Co Kα refines to its own cell only with the Co wavelength (with Cu's it would be off by 14 %).
    const outcome = await app.scanCheck.runScanCheck(done.fileId);
    expect(outcome.status).toBe("done");
    const [check] = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, done.fileId));
    const result = check.result as unknown as StoredCheckResult;
    expect(result.radiation).toEqual({ kind: "anode", anode: "Co", monochromation: cuInstrument.monochromation });
    expect(result.radiationSource).toBe("file");
    expect(result.radiationMismatch).toBe(mismatch);
    expect(result.warnings[0]).toBe(mismatch);
    expect(result.wavelength).toBeCloseTo(LINES.Co.kAlpha1, 6);
    expect(Math.abs(result.cell!.a - SI_A)).toBeLessThan(2e-3);
    expect(result.scanFormat).toBe("xrdml");
    expect(result.metadata).toMatchObject({ anode: "Co", sampleName: expect.stringContaining("Invented silicon lot 7") });

    // The check screen and its JSON show the conditions in words.
    const screen = await callRoute(app.checkScreen.loader, getRequest(`/checks/${check.id}`, await as("owner@halvorsen.example")), { id: check.id });
    const body = screen.body as { measurement: ScanInfo; radiationMismatch: string | null };
    expect(body.measurement.metadata).toMatchObject({ anode: "Co", tubeCurrentMa: 30 });
    expect(body.radiationMismatch).toBe(mismatch);
    const json = await callRoute(app.resultJson.loader, getRequest(`/checks/${check.id}/result.json`, await as("lab@graniteridge.example")), { id: check.id });
    const conditions = (json.body as { measurement: { conditions: { label: string; value: string }[] } }).measurement.conditions;
    expect(conditions).toContainEqual({ label: "Radiation", value: `Co anode · Kα1 ${LINES.Co.kAlpha1} Å, Kα2 ${LINES.Co.kAlpha2} Å, Kβ ${LINES.Co.kBeta} Å` });
    expect(conditions).toContainEqual({ label: "Tube", value: "40 kV, 30 mA" });
    expect(conditions).toContainEqual({ label: "Time per step", value: "0.5 s" });
  });

  it("a Cu file on the Cu quote carries no warning", async () => {
    const { orderId } = await cuOrder();
    const done = await apiUpload(await createToken("Cu PC"), orderId, "si-cu.xrdml", xrdml("Cu"));
    expect(done.body.warnings).toEqual([]);
    await app.scanCheck.runScanCheck(done.fileId);
    const [check] = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, done.fileId));
    const result = check.result as unknown as StoredCheckResult;
    expect(result).toMatchObject({ radiationSource: "instrument", radiationMismatch: null, verdict: "consistent" });
  });
});

describe("what a file states survives the check", () => {
  it("a scan read but with no peaks: the check fails with the engine's sentence and the conditions stay on the file", async () => {
    const { orderId } = await cuOrder();
    const done = await apiUpload(await createToken("Flat PC"), orderId, "flat.xrdml", xrdml("Cu", silicon("Cu", { flat: true })));
    expect(done.status).toBe(200);
    // As a file stored before uploads were read: the worker reads it again and keeps what it states.
    await w.db.update(w.schema.orderFiles).set({ scanFormat: null, scanInfo: null }).where(w.eq(w.schema.orderFiles.id, done.fileId));
    const outcome = await app.scanCheck.runScanCheck(done.fileId);
    expect(outcome.status).toBe("failed");
    const row = await fileRow(done.fileId);
    expect(row.scanFormat).toBe("xrdml");
    expect((row.scanInfo as ScanInfo).metadata).toMatchObject({ anode: "Cu", instrument: expect.stringContaining("INVENTED-0042") });
    const checkId = (outcome as { checkId: string }).checkId;
    const screen = await callRoute(app.checkScreen.loader, getRequest(`/checks/${checkId}`, await as("lab@graniteridge.example")), { id: checkId });
    expect(screen.status).toBe(200);
    expect(screen.body).toMatchObject({
      result: null,
      measurement: { formatLabel: expect.any(String), metadata: { sampleName: expect.stringContaining("Invented silicon lot 7") } },
    });
  });

  it("a result stored before scan metadata existed still renders, without conditions", async () => {
    const { orderId } = await cuOrder();
    const done = await apiUpload(await createToken("Old PC"), orderId, "old.gsa", gsas());
    await app.scanCheck.runScanCheck(done.fileId);
    const [check] = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, done.fileId));
    // A row as the first version wrote it: none of the scan readers' fields, none of version 2's, version 1.
    const old: Record<string, unknown> = { ...check.result, version: 1 };
    for (const key of ["scanFormat", "scanFormatLabel", "metadata", "radiationSource", "radiationMismatch", "holder", "instrumentProfile"]) delete old[key];
    for (const key of [
      "correctionRequested",
      "zeroDisplacementCorrelation",
      "transparency",
      "penetrationMm",
      "penetrationMmEsd",
      "goniometerRadiusMm",
      "foreignPeaks",
    ]) {
      delete old[key];
    }
    await w.db.update(w.schema.scanChecks).set({ result: old }).where(w.eq(w.schema.scanChecks.id, check.id));
    await w.db.update(w.schema.orderFiles).set({ scanFormat: null, scanInfo: null }).where(w.eq(w.schema.orderFiles.id, done.fileId));
    const screen = await callRoute(app.checkScreen.loader, getRequest(`/checks/${check.id}`, await as("owner@halvorsen.example")), { id: check.id });
    expect(screen.status).toBe(200);
    expect(screen.body).toMatchObject({ measurement: null, radiationMismatch: null, result: { verdict: "consistent" } });
    const json = await callRoute(app.resultJson.loader, getRequest(`/checks/${check.id}/result.json`, await as("owner@halvorsen.example")), { id: check.id });
    expect(json.body).toMatchObject({ measurement: null, result: { version: 1 } });
  });
});

describe("the instrument's holder and profile reach the check", () => {
  it("the quote's instrument names a holder and U, V, W: the stored result carries them and the sizes lose the instrumental caution", async () => {
    const { orderId } = await cuOrder();
    // U 0.004, V −0.003, W 0.002 degrees²: the order of a laboratory instrument's profile (common practice).
    await w.db
      .update(w.schema.instruments)
      .set({ sampleHolder: "glass", cagliotiU: 0.004, cagliotiV: -0.003, cagliotiW: 0.002 })
      .where(w.eq(w.schema.instruments.id, cuInstrument.id));
    try {
      const done = await apiUpload(await createToken("Holder PC"), orderId, "si-holder.gsa", gsas());
      await app.scanCheck.runScanCheck(done.fileId);
      const [check] = await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, done.fileId));
      const result = check.result as unknown as StoredCheckResult;
      expect(result.holder).toBe("glass");
      expect(result.instrumentProfile).toEqual({ U: 0.004, V: -0.003, W: 0.002 });
      expect(result.warnings).not.toContain(app.scherrer.SCHERRER_CAUTION);
    } finally {
      await w.db
        .update(w.schema.instruments)
        .set({ sampleHolder: null, cagliotiU: null, cagliotiV: null, cagliotiW: null })
        .where(w.eq(w.schema.instruments.id, cuInstrument.id));
    }
  });
});
