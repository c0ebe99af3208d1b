// Local stand-in for the Resend e-mail API: accepts sends, keeps them in a JSON listing, can simulate an outage.
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import { randomUUID } from "node:crypto";
import { dataDir } from "./paths";
import { isMain } from "./process";

export interface FakeMessage {
  id: string;
  idempotencyKey: string | null;
  receivedAt: string;
  from: string;
  to: string[];
  cc?: string[];
  subject: string;
  html?: string;
  text?: string;
  tags?: unknown;
}

export interface MailFakeOptions {
  port: number;
  apiKey?: string;
  /** Where the listing is kept so it survives a restart of the fake. */
  file?: string;
}

function readBody(req: http.IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    req.on("data", (c) => chunks.push(c));
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

export async function startMailFake(opts: MailFakeOptions) {
  const file = opts.file ?? path.join(dataDir, "mail", "messages.json");
  fs.mkdirSync(path.dirname(file), { recursive: true });
  let messages: FakeMessage[] = fs.existsSync(file) ? JSON.parse(fs.readFileSync(file, "utf8")) : [];
  const byKey = new Map<string, FakeMessage>();
  for (const m of messages) if (m.idempotencyKey) byKey.set(m.idempotencyKey, m);
  let outageUntil = 0;
  let sendAttempts = 0;

  const persist = () => fs.writeFileSync(file, JSON.stringify(messages, null, 1));
  const json = (res: http.ServerResponse, status: number, body: unknown) => {
    res.writeHead(status, { "content-type": "application/json" });
    res.end(JSON.stringify(body));
  };

  function accept(payload: Record<string, unknown>, key: string | null): FakeMessage {
    if (key && byKey.has(key)) return byKey.get(key)!;
    const asList = (v: unknown) => (v === undefined ? undefined : Array.isArray(v) ? v.map(String) : [String(v)]);
    const msg: FakeMessage = {
      id: randomUUID(),
      idempotencyKey: key,
      receivedAt: new Date().toISOString(),
      from: String(payload.from ?? ""),
      to: asList(payload.to) ?? [],
      cc: asList(payload.cc),
      subject: String(payload.subject ?? ""),
      html: payload.html as string | undefined,
      text: payload.text as string | undefined,
      tags: payload.tags,
    };
    messages.push(msg);
    if (key) byKey.set(key, msg);
    return msg;
  }

  function validate(p: Record<string, unknown>): string | null {
    if (!p.from) return "Missing `from` field.";
    if (!p.to || (Array.isArray(p.to) && p.to.length === 0)) return "Missing `to` field.";
    if (!p.subject) return "Missing `subject` field.";
    if (!p.html && !p.text && !p.react) return "Missing `html` or `text` field.";
    return null;
  }

  const server = http.createServer(async (req, res) => {
    try {
      const url = new URL(req.url ?? "/", "http://fake");
      // Test controls, not part of the provider's API.
      if (url.pathname === "/_fake/messages" && req.method === "GET") {
        return json(res, 200, { messages, sendAttempts });
      }
      if (url.pathname === "/_fake/messages" && req.method === "DELETE") {
        messages = [];
        byKey.clear();
        sendAttempts = 0;
        persist();
        return json(res, 200, { ok: true });
      }
      if (url.pathname === "/_fake/outage" && req.method === "POST") {
        const seconds = Number(url.searchParams.get("seconds") ?? "30");
        outageUntil = Date.now() + seconds * 1000;
        return json(res, 200, { outageUntil: new Date(outageUntil).toISOString() });
      }
      if (url.pathname === "/_fake/health") return json(res, 200, { ok: true });

      if (opts.apiKey && req.headers.authorization !== `Bearer ${opts.apiKey}`) {
        return json(res, 401, { statusCode: 401, name: "missing_api_key", message: "API key is invalid" });
      }
      if (Date.now() < outageUntil) {
        sendAttempts++;
        return json(res, 503, { statusCode: 503, name: "application_error", message: "Service unavailable (simulated outage)" });
      }
      const key = (req.headers["idempotency-key"] as string | undefined) ?? null;
      if (url.pathname === "/emails" && req.method === "POST") {
        sendAttempts++;
        const payload = JSON.parse(await readBody(req));
        const problem = validate(payload);
        if (problem) return json(res, 422, { statusCode: 422, name: "validation_error", message: problem });
        const msg = accept(payload, key);
        persist();
        return json(res, 200, { id: msg.id });
      }
      if (url.pathname === "/emails/batch" && req.method === "POST") {
        sendAttempts++;
        const payload = JSON.parse(await readBody(req)) as Record<string, unknown>[];
        if (!Array.isArray(payload)) return json(res, 422, { statusCode: 422, name: "validation_error", message: "Expected an array." });
        for (const p of payload) {
          const problem = validate(p);
          if (problem) return json(res, 422, { statusCode: 422, name: "validation_error", message: problem });
        }
        const ids = payload.map((p, i) => ({ id: accept(p, key ? `${key}#${i}` : null).id }));
        persist();
        return json(res, 200, { data: ids });
      }
      if (url.pathname === "/domains" && req.method === "GET") {
        return json(res, 200, { object: "list", has_more: false, data: [] });
      }
      return json(res, 404, { statusCode: 404, name: "not_found", message: "Route not found" });
    } catch (err) {
      return json(res, 400, { statusCode: 400, name: "invalid_request", message: (err as Error).message });
    }
  });
  await new Promise<void>((resolve) => server.listen(opts.port, "127.0.0.1", resolve));
  return {
    close: () => new Promise<void>((r) => server.close(() => r())),
    messages: () => messages,
  };
}

if (isMain(import.meta.url)) {
  const port = Number(process.env.MAIL_FAKE_PORT ?? 54331);
  // MAIL_FAKE_FILE lets a test run its own instance, with its own listing, beside the shared one.
  await startMailFake({ port, apiKey: process.env.RESEND_API_KEY ?? "re_local_fake", file: process.env.MAIL_FAKE_FILE || undefined });
  console.log(`mail fake listening on 127.0.0.1:${port}`);
}
