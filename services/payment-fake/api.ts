// Shared pieces of the fake's REST API: the provider's error shape, list objects, `expand[]`, params.
import type { FakeState, ProviderObject } from "./state";

export const now = () => Math.floor(Date.now() / 1000);

export interface ProviderErrorBody {
  type: string;
  message: string;
  code?: string;
  decline_code?: string;
  param?: string;
  [k: string]: unknown;
}

/**
 * Thrown by the domain code and turned into `{ error: {...} }` with its status. `stored: false` marks
 * parameter validation errors, which the provider does not keep under an idempotency key (the request
 * never started executing), so a corrected retry with the same key is not refused.
 */
export class ApiError extends Error {
  constructor(
    public status: number,
    public body: ProviderErrorBody,
    public stored = true,
  ) {
    super(body.message);
  }
}

export const invalid = (message: string, extra: Partial<ProviderErrorBody> = {}) => new ApiError(400, { type: "invalid_request_error", message, ...extra });

export const paramError = (param: string, message: string, code = "parameter_invalid") =>
  new ApiError(400, { type: "invalid_request_error", message, param, code }, false);

export const missing = (param: string) =>
  new ApiError(400, { type: "invalid_request_error", message: `Missing required param: ${param}.`, param, code: "parameter_missing" }, false);

export const noSuch = (what: string, id: string, param?: string) =>
  new ApiError(404, { type: "invalid_request_error", message: `No such ${what}: '${id}'`, code: "resource_missing", ...(param ? { param } : {}) });

export type Body = Record<string, unknown>;

export function str(body: Body, key: string): string | null {
  const v = body[key];
  return typeof v === "string" && v !== "" ? v : null;
}

export function requireStr(body: Body, key: string): string {
  const v = str(body, key);
  if (v === null) throw missing(key);
  return v;
}

export function positiveInt(value: unknown, param: string, allowZero = false): number {
  const n = typeof value === "string" && /^\d+$/.test(value) ? Number(value) : NaN;
  if (!Number.isSafeInteger(n) || n < (allowZero ? 0 : 1)) {
    throw paramError(param, `Invalid ${allowZero ? "non-negative" : "positive"} integer`, "parameter_invalid_integer");
  }
  return n;
}

export function currencyOf(value: unknown, param = "currency"): string {
  if (value === undefined || value === "") throw missing(param);
  if (typeof value !== "string" || !/^[a-zA-Z]{3}$/.test(value)) throw paramError(param, `Invalid currency: ${String(value)}`);
  return value.toLowerCase();
}

export function metadataOf(body: Body): Record<string, string> {
  const m = body.metadata;
  if (m === undefined || m === "") return {};
  if (typeof m !== "object" || m === null || Array.isArray(m)) throw paramError("metadata", "Invalid object");
  return Object.fromEntries(Object.entries(m as Record<string, unknown>).map(([k, v]) => [k, String(v)]));
}

/** `qs` turns `a[0]=…` into arrays but falls back to objects past its array limit; both mean a list. */
export function arrayOf(value: unknown): unknown[] {
  if (value === undefined || value === "") return [];
  if (Array.isArray(value)) return value;
  if (typeof value === "object" && value !== null) return Object.values(value);
  return [value];
}

export function bool(value: unknown): boolean {
  return value === true || value === "true";
}

/** The provider's list object, newest first, with `limit`, `starting_after` and `ending_before`. */
export function listObject(items: ProviderObject[], query: Body, url: string) {
  const newestFirst = [...items].reverse();
  const limit = query.limit === undefined ? 10 : Math.min(100, positiveInt(query.limit, "limit"));
  let start = 0;
  let end = newestFirst.length;
  const after = str(query, "starting_after");
  const before = str(query, "ending_before");
  if (after) start = newestFirst.findIndex((o) => o.id === after) + 1;
  if (before)
    end = Math.max(
      0,
      newestFirst.findIndex((o) => o.id === before),
    );
  let page = newestFirst.slice(start, end);
  const hasMore = page.length > limit;
  page = before ? page.slice(-limit) : page.slice(0, limit);
  return { object: "list", data: page, has_more: hasMore, url };
}

/**
 * Applies `expand[]` paths such as `payment_intent`, `payment_intent.latest_charge` or, on lists,
 * `data.charge`: an id string is replaced by a copy of the object it names. `virtual` supplies fields
 * that are not stored on the object (a session's line items).
 */
export function expand(state: FakeState, obj: unknown, paths: string[], virtual: (o: ProviderObject, field: string) => unknown = () => undefined): unknown {
  if (paths.length === 0 || obj === null || typeof obj !== "object") return obj;
  const copy = structuredClone(obj) as Record<string, unknown>;
  for (const p of paths) expandPath(state, copy, p.split("."), virtual);
  return copy;
}

function expandPath(state: FakeState, target: Record<string, unknown>, parts: string[], virtual: (o: ProviderObject, f: string) => unknown) {
  const [head, ...rest] = parts;
  if (!head) return;
  if (head === "data" && Array.isArray(target.data)) {
    for (const item of target.data as Record<string, unknown>[]) expandPath(state, item, rest, virtual);
    return;
  }
  let value = target[head];
  if (value === undefined && typeof target.id === "string") {
    const v = virtual(target as ProviderObject, head);
    if (v !== undefined) value = target[head] = v;
  }
  if (typeof value === "string") {
    const found = state.objects.get(value);
    if (found) value = target[head] = structuredClone(found);
  }
  if (rest.length > 0 && value && typeof value === "object") expandPath(state, value as Record<string, unknown>, rest, virtual);
}

export function expandParam(source: Body): string[] {
  return arrayOf(source.expand).filter((x): x is string => typeof x === "string");
}

const ZERO_DECIMAL = new Set(["bif", "clp", "djf", "gnf", "jpy", "kmf", "krw", "mga", "pyg", "rwf", "ugx", "vnd", "vuv", "xaf", "xof", "xpf"]);

/** Minor units to a readable amount, for messages and the hosted pages. */
export function formatAmount(minor: number, currency: string) {
  const major = ZERO_DECIMAL.has(currency) ? minor : minor / 100;
  try {
    return new Intl.NumberFormat("en-GB", { style: "currency", currency: currency.toUpperCase() }).format(major);
  } catch {
    return `${major} ${currency.toUpperCase()}`;
  }
}
