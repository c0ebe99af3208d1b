// The XRDML reader on files written here from the published layout: the XRDMeasurement schema's element names
// as used in the instrument files stored with the open xylib library (samples/empyrean.xrdml, schema 1.5;
// samples/examples.xrdml, schema 2.1) and the element descriptions collected in docs/scan-formats.md#xrdml.
// Every expected value is a number the test wrote into its own file, so the checks are of reading, not of
// computation. The real file in tests/data/real/ is described in tests/data/real/SOURCES.md.
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { scanSource } from "~/diffraction/readers/source";
import type { ReadScan, ScanSource } from "~/diffraction/readers/types";
import { xrdmlReader } from "~/diffraction/readers/xrdml";

function sourceOf(content: string | Uint8Array, fileName = "scan.xrdml"): ScanSource {
  const bytes = typeof content === "string" ? new TextEncoder().encode(content) : content;
  return { bytes, text: () => new TextDecoder().decode(bytes).replace(/^\uFEFF/, ""), fileName };
}

function read(content: string | Uint8Array): ReadScan {
  const r = xrdmlReader.read(sourceOf(content));
  if ("error" in r) throw new Error(`expected a scan, got: ${r.error}`);
  return r;
}

function refused(content: string | Uint8Array): string {
  const r = xrdmlReader.read(sourceOf(content));
  if (!("error" in r)) throw new Error("expected a refusal");
  // One clear sentence: a capital first, a full stop last, no line breaks.
  expect(r.error).toMatch(/^[A-Z].*[.]$/);
  expect(r.error).not.toContain("\n");
  return r.error;
}

interface ScanSpec {
  start?: number;
  end?: number;
  list?: number[];
  values: number[];
  element?: "counts" | "intensities";
  unit?: string;
  time?: string;
  factors?: number[];
  axis?: string;
  extra?: string;
}

function scanXml({
  start = 10,
  end,
  list,
  values,
  element = "intensities",
  unit = "counts",
  time = "1.50",
  factors,
  axis = "Gonio",
  extra = "",
}: ScanSpec): string {
  const last = end ?? start + 0.02 * (values.length - 1);
  const positions = list
    ? `<positions axis="2Theta" unit="deg"><listPositions>${list.join(" ")}</listPositions></positions>`
    : `<positions axis="2Theta" unit="deg">\n<startPosition>${start}</startPosition>\n<endPosition>${last}</endPosition>\n</positions>`;
  return `<scan appendNumber="0" mode="Continuous" scanAxis="${axis}" status="Completed">
  <header>
    <startTimeStamp>2024-05-06T07:08:09+02:00</startTimeStamp>
    <endTimeStamp>2024-05-06T07:38:09+02:00</endTimeStamp>
    <author><name>operator</name></author>
    <source>
      <applicationSoftware version="1.0">Collector</applicationSoftware>
      <instrumentControlSoftware version="2.0">BENCHTOP-7</instrumentControlSoftware>
      <instrumentID>0000000012345678</instrumentID>
    </source>
  </header>
  <dataPoints>
    ${positions}
    <positions axis="Omega" unit="deg"><startPosition>${start / 2}</startPosition><endPosition>${last / 2}</endPosition></positions>
    ${time ? `<commonCountingTime unit="seconds">${time}</commonCountingTime>` : ""}
    ${factors ? `<beamAttenuationFactors>${factors.join(" ")}</beamAttenuationFactors>` : ""}
    ${extra}
    <${element} unit="${unit}">${values.join(" ")}</${element}>
  </dataPoints>
</scan>`;
}

function measurementXml(scans: string[], { version = "1.5", usedWavelength = true } = {}): string {
  return `<?xml version="1.0" encoding="UTF-8"?>
<xrdMeasurements xmlns="http://www.xrdml.com/XRDMeasurement/${version}" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" status="Completed">
  <comment>
    <entry>Configuration=Flat stage, Owner=User-1</entry>
    <entry>Diffractometer system=BENCHTOP-7</entry>
  </comment>
  <sample type="To be analyzed">
    <id>S-042</id>
    <name>Invented corundum</name>
    <preparedBy></preparedBy>
  </sample>
  <xrdMeasurement measurementType="Scan" status="Completed" sampleMode="Reflection">
    ${
      usedWavelength
        ? `<usedWavelength intended="K-Alpha 1">
      <kAlpha1 unit="Angstrom">1.5405980</kAlpha1>
      <kAlpha2 unit="Angstrom">1.5444260</kAlpha2>
      <kBeta unit="Angstrom">1.3922500</kBeta>
      <ratioKAlpha2KAlpha1>0.5000</ratioKAlpha2KAlpha1>
    </usedWavelength>`
        : ""
    }
    <incidentBeamPath>
      <radius unit="mm">240.00</radius>
      <xRayTube id="1" name="Invented Cu tube">
        <tension unit="kV">45</tension>
        <current unit="mA">40</current>
        <anodeMaterial>Cu</anodeMaterial>
        <focus type="Line"><length unit="mm">12.0</length><width unit="mm">0.4</width></focus>
      </xRayTube>
      <sollerSlit id="2" name="Soller slits 0.04 rad."><opening unit="rad">0.0400</opening></sollerSlit>
      <mask id="3" name="Fixed incident beam mask 10 mm"><distanceToSample unit="mm">171.30</distanceToSample><width unit="mm">11.60</width></mask>
      <antiScatterSlit id="4" name="Fixed slit 1/4°" xsi:type="fixedAntiScatterSlitType"><height unit="mm">0.38</height></antiScatterSlit>
      <divergenceSlit id="5" name="Fixed slit 1/8°" xsi:type="fixedDivergenceSlitType"><distanceToSample unit="mm">140.00</distanceToSample><height unit="mm">0.19</height></divergenceSlit>
    </incidentBeamPath>
    <diffractedBeamPath>
      <radius unit="mm">240.00</radius>
      <receivingSlit id="6" name="Receiving slit 0.1 mm"><height unit="mm">0.10</height></receivingSlit>
      <filter id="7" name="Beta-filter Nickel"><material>Ni</material><thickness unit="mm">0.020</thickness></filter>
      <detector id="8" name="Invented strip detector" xsi:type="areaDetectorType"><mode>Scanning</mode></detector>
    </diffractedBeamPath>
    ${scans.join("\n")}
  </xrdMeasurement>
</xrdMeasurements>
`;
}

/** 101 counts with one peak, whole numbers as a counter gives them. */
const COUNTS = Array.from({ length: 101 }, (_, i) => Math.round(120 + 900 * Math.exp(-(((i - 50) / 4) ** 2))));

describe("XRDML: one scan", () => {
  it("reads positions from start and end, intensities and everything the file states about the measurement", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, start: 10, end: 12 })]));
    expect(r.twoTheta.length).toBe(101);
    expect(r.twoTheta[0]).toBe(10);
    expect(r.twoTheta[50]).toBeCloseTo(11, 12);
    expect(r.twoTheta[100]).toBe(12);
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.esd).toBeUndefined();
    expect(r.warnings).toEqual([]);
    expect(r.metadata).toMatchObject({
      probe: "x-ray",
      anode: "Cu",
      kAlpha1: 1.540598,
      kAlpha2: 1.544426,
      kBeta: 1.39225,
      kAlpha2Ratio: 0.5,
      tubeVoltageKv: 45,
      tubeCurrentMa: 40,
      scanAxis: "Gonio",
      scanMode: "continuous",
      step: 0.02,
      timePerStep: 1.5,
      intensityUnit: "counts",
      sampleName: "Invented corundum (S-042)",
      measuredAt: "2024-05-06T07:08:09+02:00",
      instrument: "BENCHTOP-7 (instrument ID 0000000012345678)",
      scansInFile: 1,
      scanTaken: 1,
    });
    expect(r.metadata.slits).toEqual([
      { name: "incident-beam divergence slit", value: "Fixed slit 1/8° (height 0.19 mm)" },
      { name: "incident-beam anti-scatter slit", value: "Fixed slit 1/4° (height 0.38 mm)" },
      { name: "incident-beam Soller slit", value: "Soller slits 0.04 rad. (opening 0.0400 rad)" },
      { name: "incident-beam beam mask", value: "Fixed incident beam mask 10 mm (width 11.60 mm)" },
      { name: "diffracted-beam receiving slit", value: "Receiving slit 0.1 mm (height 0.10 mm)" },
      { name: "diffracted-beam filter", value: "Beta-filter Nickel (thickness 0.020 mm, material Ni)" },
    ]);
  });

  it("reads listed positions", () => {
    const list = COUNTS.map((_, i) => +(20 + 0.013 * i + (i % 3) * 0.001).toFixed(4));
    const r = read(measurementXml([scanXml({ values: COUNTS, list })]));
    expect(Array.from(r.twoTheta)).toEqual(list);
  });

  it("reads exponent notation and line breaks in the number lists as Number() does (xs:double, common practice)", () => {
    const list = COUNTS.map((_, i) => (i % 4 === 1 ? (20 + 0.02 * i).toExponential(4) : (20 + 0.02 * i).toFixed(2)));
    const values = COUNTS.map((c, i) => (i % 3 === 0 ? c.toExponential().toUpperCase() : String(c)));
    const xml = measurementXml([scanXml({ values: values as unknown as number[], list: list as unknown as number[] })]);
    const r = read(xml.replace(list.join(" "), list.join("\r\n\t")));
    expect(Array.from(r.twoTheta)).toEqual(list.map(Number));
    expect(Array.from(r.intensity)).toEqual(COUNTS);
  });

  it("takes a namespace prefix, a byte-order mark, Windows line ends, unknown elements and missing optional ones", () => {
    const plain = measurementXml([scanXml({ values: COUNTS, extra: "<vendorExtension><anything a='1'>x</anything></vendorExtension>" })], {
      version: "2.1",
      usedWavelength: false,
    });
    const prefixed = plain
      .replace(/<(\/?)(?!\?)([A-Za-z])/g, "<$1x:$2")
      .replace('xmlns="http://www.xrdml.com', 'xmlns:x="http://www.xrdml.com')
      .replace(/\n/g, "\r\n");
    const bytes = new Uint8Array([0xef, 0xbb, 0xbf, ...new TextEncoder().encode(prefixed)]);
    expect(xrdmlReader.sniff(sourceOf(bytes))).toBe(1);
    const r = read(bytes);
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.metadata.kAlpha1).toBeUndefined();
    expect(r.metadata.anode).toBe("Cu");
  });

  it("reads a file saved as UTF-16 with a byte-order mark (through the project's own source wrapper)", () => {
    const text = measurementXml([scanXml({ values: COUNTS })]).replace('encoding="UTF-8"', 'encoding="UTF-16"');
    const bytes = new Uint8Array(2 + 2 * text.length);
    bytes.set([0xff, 0xfe]);
    for (let i = 0; i < text.length; i++) new DataView(bytes.buffer).setUint16(2 + 2 * i, text.charCodeAt(i), true);
    const source = scanSource(bytes, "scan.xrdml");
    expect(xrdmlReader.sniff(source)).toBe(1);
    const r = xrdmlReader.read(source);
    if ("error" in r) throw new Error(r.error);
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.metadata.slits?.[1].value).toBe("Fixed slit 1/4° (height 0.38 mm)");
  });

  it("reads a file without an XML declaration that starts with a comment", () => {
    const text = `<!-- exported -->\n${measurementXml([scanXml({ values: COUNTS })]).replace(/^<\?xml[^>]*>\n/, "")}`;
    expect(xrdmlReader.sniff(sourceOf(text))).toBe(1);
    expect(read(text).twoTheta.length).toBe(101);
  });
});

describe("XRDML: counts, counts per second and attenuation", () => {
  const factors = COUNTS.map((_, i) => (i >= 48 && i <= 52 ? 12.5 : 1));

  it("multiplies raw counts (schema 2.x <counts>) by the beam attenuation factors, with their uncertainty", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, element: "counts", factors })], { version: "2.1" }));
    expect(r.intensity[50]).toBe(COUNTS[50] * 12.5);
    expect(r.intensity[10]).toBe(COUNTS[10]);
    expect(r.esd?.[50]).toBeCloseTo(12.5 * Math.sqrt(COUNTS[50]), 9);
    expect(r.esd?.[10]).toBeCloseTo(Math.sqrt(COUNTS[10]), 9);
    expect(r.warnings).toEqual(["The raw counts of 5 points measured through the beam attenuator were multiplied by the file's attenuation factors."]);
  });

  it("keeps corrected <intensities> as they are: the factors are already applied", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, element: "intensities", factors })]));
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.warnings).toEqual([]);
  });

  it("turns counts per second into counts with the common counting time, and says so", () => {
    const cps = COUNTS.map((c) => c / 2.5);
    const r = read(measurementXml([scanXml({ values: cps, unit: "counts/s", time: "2.5" })]));
    for (const i of [0, 50, 100]) expect(r.intensity[i]).toBeCloseTo(COUNTS[i], 9);
    expect(r.metadata.intensityUnit).toBe("counts");
    expect(r.metadata.timePerStep).toBe(2.5);
    expect(r.warnings).toEqual(["The file gives counts per second; they were multiplied by the counting time of 2.5 s per step to give counts."]);
  });

  it("uses per-point counting times", () => {
    const times = COUNTS.map((_, i) => (i < 50 ? 1 : 2));
    const extra = `<countingTimes unit="seconds">${times.join(" ")}</countingTimes>`;
    const r = read(measurementXml([scanXml({ values: COUNTS, unit: "cps", time: "", extra })]));
    expect(r.intensity[49]).toBe(COUNTS[49]);
    expect(r.intensity[50]).toBe(COUNTS[50] * 2);
    expect(r.metadata.timePerStep).toBeUndefined();
  });

  it("keeps counts per second when the file states no counting time", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, unit: "counts per second", time: "" })]));
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.metadata.intensityUnit).toBe("counts per second");
  });
});

describe("XRDML: several scans", () => {
  it("adds the counts of scans over the same range point by point and says how", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS }), scanXml({ values: COUNTS }), scanXml({ values: COUNTS })]));
    expect(r.intensity[50]).toBe(3 * COUNTS[50]);
    expect(r.metadata.scansInFile).toBe(3);
    expect(r.metadata.scanTaken).toBe(1);
    expect(r.metadata.timePerStep).toBeCloseTo(4.5, 12);
    expect(r.warnings).toEqual(["The file holds 3 scans over the same range (10–12° 2θ); their counts were added point by point."]);
  });

  it("averages counts per second of scans over the same range when no counting time turns them into counts", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, unit: "cps", time: "" }), scanXml({ values: COUNTS.map((c) => c + 2), unit: "cps", time: "" })]));
    expect(r.intensity[0]).toBe(COUNTS[0] + 1);
    expect(r.warnings[0]).toContain("averaged point by point");
  });

  it("takes the first of scans over different ranges, with a warning", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS, start: 10 }), scanXml({ values: COUNTS, start: 30 })]));
    expect(r.twoTheta[0]).toBe(10);
    expect(r.metadata.scansInFile).toBe(2);
    expect(r.metadata.scanTaken).toBe(1);
    expect(r.warnings).toEqual(["The file holds 2 scans over different 2θ ranges or units; the first (scan 1, 10–12° 2θ) was read."]);
  });

  it("leaves out a scan whose numbers do not fit and says so, when another can be read", () => {
    const r = read(measurementXml([scanXml({ values: COUNTS }), scanXml({ values: COUNTS, element: "counts", factors: [1, 2] })]));
    expect(Array.from(r.intensity)).toEqual(COUNTS);
    expect(r.warnings).toEqual([
      "The XRDML file's scan 2 lists 2 beam attenuation factors for 101 data points; that scan was left out.",
      "The file holds 2 scans; scan 1 (10–12° 2θ), the only usable one over 2θ, was read.",
    ]);
  });

  it("reads the scan over 2θ when another scan is an omega rocking curve", () => {
    const rocking = `<scan mode="Continuous" scanAxis="Omega" status="Completed"><dataPoints>
      <positions axis="2Theta" unit="deg"><commonPosition>28.44</commonPosition></positions>
      <positions axis="Omega" unit="deg"><startPosition>13</startPosition><endPosition>15</endPosition></positions>
      <intensities unit="counts">${COUNTS.join(" ")}</intensities></dataPoints></scan>`;
    const r = read(measurementXml([rocking, scanXml({ values: COUNTS, start: 40 })]));
    expect(r.twoTheta[0]).toBe(40);
    expect(r.metadata.scanTaken).toBe(2);
    expect(r.warnings).toEqual(["The file holds 2 scans; scan 2 (40–42° 2θ), the only usable one over 2θ, was read."]);
    const only = refused(measurementXml([rocking]));
    expect(only).toBe("The XRDML file has no scan over 2θ (its scans run over Omega); a powder scan over 2θ is needed.");
  });
});

describe("XRDML: broken files give one sentence", () => {
  const whole = measurementXml([scanXml({ values: COUNTS })]);

  it("a file cut off in the middle", () => {
    expect(refused(whole.slice(0, Math.floor(whole.length * 0.8)))).toMatch(
      /^The XRDML file is not well-formed XML \(the fault is near line \d+\); it may be cut off or damaged\.$/,
    );
  });

  it("mismatched tags", () => {
    expect(refused(whole.replace("</dataPoints>", "</datapoints>"))).toContain("not well-formed XML");
  });

  it("listed positions that do not match the intensities", () => {
    const error = refused(measurementXml([scanXml({ values: COUNTS, list: COUNTS.slice(1).map((_, i) => 10 + i * 0.02) })]));
    expect(error).toBe("The XRDML file's scan 1 lists 100 2θ positions but 101 intensities.");
  });

  it("text among the intensities", () => {
    expect(refused(measurementXml([scanXml({ values: [...COUNTS.slice(0, 5), "n/a", ...COUNTS.slice(6)] as number[] })]))).toBe(
      `The XRDML file's scan 1 has "n/a" among its intensities, which is not a number.`,
    );
  });

  it("attenuation factors that do not match the counts", () => {
    expect(refused(measurementXml([scanXml({ values: COUNTS, element: "counts", factors: [1, 1, 1] })]))).toBe(
      "The XRDML file's scan 1 lists 3 beam attenuation factors for 101 data points.",
    );
  });

  it("a scan without intensities, and a file without scans", () => {
    expect(refused(measurementXml([scanXml({ values: COUNTS }).replace(/<intensities[^>]*>[^<]*<\/intensities>/, "")]))).toBe(
      "The XRDML file's scan 1 has neither counts nor intensities.",
    );
    expect(refused(measurementXml([]))).toBe("The XRDML file holds no scan.");
  });
});

describe("XRDML: sniffing by content", () => {
  it("claims the root element xrdMeasurements, with or without a prefix, whatever the file name", () => {
    const text = measurementXml([scanXml({ values: COUNTS })]);
    expect(xrdmlReader.sniff(sourceOf(text, "export.xml"))).toBe(1);
    expect(xrdmlReader.sniff(sourceOf(text, "scan.txt"))).toBe(1);
    expect(xrdmlReader.sniff(sourceOf(text.replace(/<(\/?)xrdMeasurements/g, "<$1p:xrdMeasurements")))).toBe(1);
  });

  it("does not claim other XML, text scans or binary files, even named .xrdml", () => {
    expect(xrdmlReader.sniff(sourceOf('<?xml version="1.0"?><RawData><xrdMeasurements/></RawData>'))).toBe(0);
    expect(xrdmlReader.sniff(sourceOf("10.00 120\n10.02 130\n"))).toBe(0);
    expect(xrdmlReader.sniff(sourceOf(new Uint8Array([0x52, 0x41, 0x57, 0x31, 0x2e, 0x30, 0x31, 0, 1, 2, 3])))).toBe(0);
  });
});

describe("XRDML: speed", () => {
  it("reads a 130 000-point scan well under 100 ms", () => {
    const n = 130_000;
    const values = Array.from({ length: n }, (_, i) => 100 + ((i * 7919) % 5000));
    const text = measurementXml([scanXml({ values, start: 5, end: 135 })]);
    const bytes = new TextEncoder().encode(text);
    const times: number[] = [];
    let r: ReturnType<typeof xrdmlReader.read> | undefined;
    for (let k = 0; k < 8; k++) {
      // CPU time of this process, so that other work on the shared machine does not count against the reader.
      const before = process.cpuUsage();
      r = xrdmlReader.read({ bytes, text: () => text });
      const used = process.cpuUsage(before);
      times.push((used.user + used.system) / 1000);
    }
    if (!r || "error" in r) throw new Error("expected a scan");
    expect(r.twoTheta.length).toBe(n);
    expect(r.intensity[n - 1]).toBe(values[n - 1]);
    // Best of eight, so one garbage collection does not decide; the target is the brief's 100 ms.
    expect(Math.min(...times)).toBeLessThan(100);
  });
});

describe("XRDML: real instrument files in tests/data/real", () => {
  const folder = join(__dirname, "../../data/real");
  const files = (() => {
    try {
      return readdirSync(folder).filter((f) => f.toLowerCase().endsWith(".xrdml"));
    } catch {
      return [];
    }
  })();

  it.runIf(files.includes("na2co2teo6-cu-nifilter.xrdml"))(
    "reads the schema 2.1 file stated in SOURCES.md: 3998 counts, 15.02–119.99° 2θ, its tube and wavelengths",
    () => {
      // Expected values: tests/data/real/SOURCES.md, which quotes the file's own header.
      const bytes = new Uint8Array(readFileSync(join(folder, "na2co2teo6-cu-nifilter.xrdml")));
      expect(xrdmlReader.sniff(sourceOf(bytes))).toBe(1);
      const r = read(bytes);
      expect(r.twoTheta.length).toBe(3998);
      expect(r.twoTheta[0]).toBeCloseTo(15.02343028, 8);
      expect(r.twoTheta[3997]).toBeCloseTo(119.98691, 8);
      expect(r.intensity[0]).toBe(10704);
      expect(r.metadata).toMatchObject({
        anode: "Cu",
        kAlpha1: 1.540598,
        kAlpha2: 1.544426,
        kBeta: 1.39225,
        kAlpha2Ratio: 0.5,
        tubeVoltageKv: 45,
        tubeCurrentMa: 40,
        scanAxis: "Gonio",
        scanMode: "continuous",
        timePerStep: 106.59,
        intensityUnit: "counts",
        instrument: "EMPYREAN (instrument ID 0000000011140527)",
        scansInFile: 1,
      });
      expect(r.metadata.step).toBeCloseTo(0.0262606, 6);
      expect(r.metadata.measuredAt?.startsWith("2022-09-29")).toBe(true);
      expect(r.metadata.slits?.find((s) => s.name === "diffracted-beam filter")?.value).toBe("Large beta-filter Nickel (thickness 0.020 mm, material Ni)");
    },
  );

  it.each(files)("reads %s", (file) => {
    const r = read(new Uint8Array(readFileSync(join(folder, file))));
    expect(r.twoTheta.length).toBeGreaterThan(50);
    expect(r.intensity.length).toBe(r.twoTheta.length);
    expect(r.twoTheta[r.twoTheta.length - 1]).toBeGreaterThan(r.twoTheta[0]);
  });
});
