// What every scan reader takes and gives. A format is one module in this folder exporting one ScanReader; the
// registry (./index.ts) lists them in the order they are asked. Readers decide by content, never by the file's
// extension alone (docs/scan-formats.md lists each format and where its layout is described).

/** A file as it arrived: its bytes, and the same bytes as text on demand. */
export interface ScanSource {
  bytes: Uint8Array;
  /** The file as text: UTF-8 when the bytes are valid UTF-8, otherwise Latin-1; decoded once, on first use. */
  text(): string;
  /** The uploaded file's name, for messages only (and as a last tie-breaker). */
  fileName?: string;
}

/** Slit, filter or optic named by the file, as it states it (e.g. "divergence slit", "0.5°"). */
export interface ScanSetting {
  name: string;
  value: string;
}

/** What the file states about how it was measured; every field is optional because files state little or much. */
export interface ScanMetadata {
  /** Anode element as the file names it, normalised to its symbol ("Cu"). */
  anode?: string;
  /** Å. */
  kAlpha1?: number;
  kAlpha2?: number;
  kBeta?: number;
  /** Kα2/Kα1 intensity ratio the file states. */
  kAlpha2Ratio?: number;
  /** A single wavelength (monochromatic, synchrotron, neutron), Å. */
  wavelength?: number;
  /** "X-ray" or "neutron" when the file says. */
  probe?: "x-ray" | "neutron";
  tubeVoltageKv?: number;
  tubeCurrentMa?: number;
  /** The scanned axis as the file names it ("2Theta-Omega", "2Theta", "Gonio"). */
  scanAxis?: string;
  /** "continuous" or "step" (or the file's own word). */
  scanMode?: string;
  /** Degrees 2θ. */
  step?: number;
  /** Seconds per step. */
  timePerStep?: number;
  /** What the intensities are: "counts" or "counts per second" (the reader converts nothing silently). */
  intensityUnit?: string;
  slits?: ScanSetting[];
  sampleName?: string;
  /** ISO 8601 date or date-time as far as the file states it. */
  measuredAt?: string;
  /** The instrument's name, serial or id as the file states it. */
  instrument?: string;
  /** The file's own title or comment line, as it states it. */
  title?: string;
  /** The instrument-parameter file a refinement program's data file names (GSAS "Instrument parameter" line). */
  instrumentParameterFile?: string;
  /** Several scans in one file: how many there were and which one was taken (1-based). */
  scansInFile?: number;
  scanTaken?: number;
}

/** A reader's result before the common checks (ascending angles, enough points, finite numbers). */
export interface ReadScan {
  twoTheta: ArrayLike<number>;
  intensity: ArrayLike<number>;
  /** Standard uncertainty of each intensity, when the file gives one. */
  esd?: ArrayLike<number>;
  metadata: ScanMetadata;
  warnings: string[];
}

export interface ScanReader {
  /** Stable id stored with the scan ("xrdml", "gsas", …). */
  format: string;
  /** What people read: "XRDML (XML)", "GSAS standard powder data". */
  label: string;
  /**
   * How sure the reader is, from the content, that the file is in its format: 0 not at all, 1 certain. The
   * registry asks every reader and reads the file with the surest one (ties: registry order).
   */
  sniff(source: ScanSource): number;
  /** Reads the file; a file in this format that cannot be used gives one sentence. */
  read(source: ScanSource): ReadScan | { error: string };
}
