// One intensity per line under a header that gives the start and step of 2θ (and often the end): "START=10",
// "STEP 0.02", "STOP: 90", then a column of counts. The angles follow from the header; the number of values is
// checked against the range the header implies (docs/scan-formats.md#one-value-per-line-with-a-startstep-header).
import { applyKeyValue, keyValue } from "./header-metadata";
import { evenlySpaced, headLines, isBlankLine, numbersOfLine, splitLines, toNumber } from "./text";
import type { ReadScan, ScanMetadata, ScanReader, ScanSource } from "./types";

/** Values that may differ from the count a header implies (a last point counted or not) without a refusal. */
const COUNT_TOLERANCE = 1;

const START_KEY = /^(start|first|begin)( ?(angle|2 ?theta|2 ?th|position|pos))?$|^(2 ?theta|2 ?th|angle) ?(start|min|first)$/;
const STEP_KEY = /^(step|increment|inc)( ?(size|width|angle|2 ?theta))?$|^stepsize$|^(2 ?theta|2 ?th|angle) ?(step|inc)$/;
const END_KEY = /^(end|stop|last|finish)( ?(angle|2 ?theta|2 ?th|position|pos))?$|^(2 ?theta|2 ?th|angle) ?(end|stop|max|last)$/;
const COUNT_KEY = /^(n ?points|number of points|points|npts|count|data ?count|no of points)$/;

const DECIMAL_COMMA = /^\s*[-+]?\d*,\d+\s*$/;

const normal = (key: string) =>
  key
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, " ")
    .trim();

/** Where the header says the angles start, step and end, as written. */
interface Grid {
  start?: string;
  step?: string;
  end?: string;
  count?: string;
}

function gridKey(grid: Grid, key: string, value: string): boolean {
  const k = normal(key);
  const v = /^[-+]?[\d.,]+/.exec(value.trim())?.[0];
  if (v === undefined) return false;
  if (START_KEY.test(k)) grid.start ??= v;
  else if (STEP_KEY.test(k)) grid.step ??= v;
  else if (END_KEY.test(k)) grid.end ??= v;
  else if (COUNT_KEY.test(k)) grid.count ??= v;
  else return false;
  return true;
}

function sniff(source: ScanSource): number {
  const lines = headLines(source.text(), 120);
  const grid: Grid = {};
  const scratch: number[] = [];
  let i = 0;
  for (; i < lines.length; i++) {
    const line = lines[i];
    if (isBlankLine(line)) continue;
    const count = numbersOfLine(line, scratch);
    if (count >= 1) break;
    const kv = keyValue(line);
    if (kv) gridKey(grid, kv.key, kv.value);
  }
  if (grid.start === undefined || grid.step === undefined) return 0;
  // The data under it: one number a line.
  let singles = 0;
  for (let seen = 0; i < lines.length && seen < 20; i++) {
    if (isBlankLine(lines[i])) continue;
    seen++;
    if (DECIMAL_COMMA.test(lines[i]) || numbersOfLine(lines[i], scratch) === 1) singles++;
    else return 0;
  }
  return singles > 0 ? 0.7 : 0;
}

/**
 * The intensities from line `from` on (numbers only, any count a line), and the scan they make with the grid.
 * Shared with the CPI reader.
 */
export function readIntensityList(
  lines: string[],
  from: number,
  grid: Grid,
  meta: ScanMetadata,
  warnings: string[],
  what: string,
): ReadScan | { error: string } {
  const values: number[] = [];
  const scratch: number[] = [];
  let stoppedAt = -1;
  for (let i = from; i < lines.length; i++) {
    const line = lines[i];
    if (isBlankLine(line)) continue;
    // One value a line, so "123,5" is a decimal comma, not two values.
    if (DECIMAL_COMMA.test(line)) {
      values.push(toNumber(line));
      continue;
    }
    const count = numbersOfLine(line, scratch);
    if (count < 0) {
      stoppedAt = i;
      break;
    }
    for (let f = 0; f < count; f++) values.push(scratch[f]);
  }
  if (stoppedAt >= 0) {
    const rest = lines.slice(stoppedAt + 1).some((l) => numbersOfLine(l, scratch) > 0);
    if (rest) warnings.push(`Reading stopped at line ${stoppedAt + 1} ("${lines[stoppedAt].trim().slice(0, 30)}"); the lines after it were ignored.`);
  }
  const start = toNumber(grid.start);
  const step = toNumber(grid.step);
  if (!Number.isFinite(start) || !Number.isFinite(step) || step === 0) {
    return { error: `The ${what} header gives no usable start and step of 2θ.` };
  }
  const n = values.length;
  const end = toNumber(grid.end);
  const stated = toNumber(grid.count);
  const implied = Number.isFinite(end) ? Math.round((end - start) / step) + 1 : Number.isFinite(stated) ? Math.round(stated) : NaN;
  if (Number.isFinite(implied) && Math.abs(n - implied) > COUNT_TOLERANCE) {
    const range = Number.isFinite(end) ? `range ${start}–${end}° in steps of ${step}°` : `point count`;
    return { error: `The ${what} header's ${range} implies ${implied} points, but the file holds ${n} values.` };
  }
  if (Number.isFinite(implied) && n !== implied) warnings.push(`The header implies ${implied} points and the file holds ${n}; the ${n} were read.`);
  meta.step ??= Math.abs(step);
  return {
    twoTheta: evenlySpaced(grid.start!, grid.step!, n),
    intensity: Float64Array.from(values),
    metadata: meta,
    warnings,
  };
}

function read(source: ScanSource): ReadScan | { error: string } {
  const lines = splitLines(source.text());
  const grid: Grid = {};
  const meta: ScanMetadata = {};
  const scratch: number[] = [];
  let i = 0;
  for (; i < lines.length; i++) {
    const line = lines[i];
    if (isBlankLine(line)) continue;
    if (numbersOfLine(line, scratch) >= 1) break;
    const kv = keyValue(line);
    if (!kv) continue;
    if (!gridKey(grid, kv.key, kv.value)) applyKeyValue(meta, kv.key, kv.value);
  }
  return readIntensityList(lines, i, grid, meta, [], "start/step");
}

export const stepListReader: ScanReader = {
  format: "step-list",
  label: "One value per line with a start/step header",
  sniff,
  read,
};
