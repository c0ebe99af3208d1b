// In-memory state of the payment-provider fake: public objects by id, idempotency records, private
// bookkeeping (line items, onboarding links), webhook delivery records; kept on disk between runs.
import fs from "node:fs";
import path from "node:path";
import { randomBytes } from "node:crypto";

export type ProviderObject = Record<string, unknown> & { id: string; object: string };

export interface IdempotencyRecord {
  method: string;
  path: string;
  bodyHash: string;
  status: number;
  response: unknown;
}

export interface DeliveryRecord {
  id: string;
  seq: number;
  eventId: string;
  url: string;
  status: "pending" | "held" | "delivering" | "delivered" | "failed";
  attempts: number;
  lastStatusCode: number | null;
  lastError: string | null;
  deliveredAt: number | null;
}

// Writes are coalesced: a burst of API calls (a property test creating thousands of objects) would
// otherwise rewrite the whole file once per object.
const SAVE_DELAY_MS = 25;

export class FakeState {
  objects = new Map<string, ProviderObject>();
  idempotency = new Map<string, IdempotencyRecord>();
  internal = new Map<string, unknown>();
  deliveries = new Map<string, DeliveryRecord>();
  private saveTimer: NodeJS.Timeout | null = null;
  private seq = 0;

  constructor(private file?: string) {
    if (file && fs.existsSync(file)) {
      const saved = JSON.parse(fs.readFileSync(file, "utf8"));
      this.objects = new Map(saved.objects ?? []);
      this.idempotency = new Map(saved.idempotency ?? []);
      this.internal = new Map(saved.internal ?? []);
      this.deliveries = new Map(saved.deliveries ?? []);
      this.seq = Number(saved.seq ?? 0);
    }
  }

  save() {
    if (!this.file || this.saveTimer) return;
    this.saveTimer = setTimeout(() => this.flush(), SAVE_DELAY_MS);
  }

  /** Writes the state now (atomically, so a crash mid-write never leaves half a file). */
  flush() {
    if (this.saveTimer) clearTimeout(this.saveTimer);
    this.saveTimer = null;
    if (!this.file) return;
    fs.mkdirSync(path.dirname(this.file), { recursive: true });
    const data = {
      objects: [...this.objects],
      idempotency: [...this.idempotency],
      internal: [...this.internal],
      deliveries: [...this.deliveries],
      seq: this.seq,
    };
    const tmp = `${this.file}.${process.pid}.tmp`;
    fs.writeFileSync(tmp, JSON.stringify(data));
    fs.renameSync(tmp, this.file);
  }

  nextSeq() {
    return ++this.seq;
  }

  newId(prefix: string) {
    return `${prefix}_${randomBytes(12).toString("base64url").replace(/[-_]/g, "x")}`;
  }

  put<T extends ProviderObject>(obj: T): T {
    this.objects.set(obj.id, obj);
    this.save();
    return obj;
  }

  get(id: string, object: string): ProviderObject | undefined {
    const o = this.objects.get(id);
    return o && o.object === object ? o : undefined;
  }

  /** Objects of one type in creation order (Map keeps first-insertion order through updates). */
  list(object: string) {
    return [...this.objects.values()].filter((o) => o.object === object);
  }

  setInternal(key: string, value: unknown) {
    this.internal.set(key, value);
    this.save();
  }

  getInternal<T>(key: string): T | undefined {
    return this.internal.get(key) as T | undefined;
  }

  reset() {
    this.objects.clear();
    this.idempotency.clear();
    this.internal.clear();
    this.deliveries.clear();
    this.seq = 0;
    this.save();
  }
}
