// In-memory state of the payment-provider fake: objects by id, idempotency records, kept on disk between runs.
import fs from "node:fs";
import path from "node:path";
import { randomBytes } from "node:crypto";

export type ProviderObject = Record<string, unknown> & { id: string; object: string };

export interface IdempotencyRecord {
  bodyHash: string;
  status: number;
  response: unknown;
}

export class FakeState {
  objects = new Map<string, ProviderObject>();
  idempotency = new Map<string, IdempotencyRecord>();

  constructor(private file?: string) {
    if (file && fs.existsSync(file)) {
      const saved = JSON.parse(fs.readFileSync(file, "utf8"));
      this.objects = new Map(saved.objects);
      this.idempotency = new Map(saved.idempotency);
    }
  }

  save() {
    if (!this.file) return;
    fs.mkdirSync(path.dirname(this.file), { recursive: true });
    const data = { objects: [...this.objects], idempotency: [...this.idempotency] };
    fs.writeFileSync(this.file, JSON.stringify(data));
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

  list(object: string) {
    return [...this.objects.values()].filter((o) => o.object === object);
  }

  reset() {
    this.objects.clear();
    this.idempotency.clear();
    this.save();
  }
}
