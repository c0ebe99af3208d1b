// Bad input that only exists on the wire: oversized and cut-off bodies, wrong Content-Types, bytes that are
// not UTF-8, very long URLs, and markup that must come back escaped. The built app (server/main.ts) runs on a
// spare port against this file's own database; each refusal is a 4xx with a sentence and changes no table.
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { waitForPort } from "../../services/process";
import { root } from "../../services/paths";
import { changedTables, snapshot } from "./db-snapshot";
import { SAMPLE_FIELDS } from "./form-fixtures";

const PASSWORD = "diffractory-demo";
let server: ChildProcess | undefined;
let base = "";
let port = 0;
let serverLog = "";
let client = "";
let draftId = "";

async function freePort() {
  return new Promise<number>((resolve) => {
    const probe = net.createServer().listen(0, "127.0.0.1", () => {
      const { port: p } = probe.address() as net.AddressInfo;
      probe.close(() => resolve(p));
    });
  });
}

interface Answer {
  status: number;
  type: string;
  body: string;
  location: string | null;
}

async function send(pathname: string, init: RequestInit & { duplex?: "half" } = {}, cookie = client): Promise<Answer> {
  const headers = new Headers(init.headers);
  if (!headers.has("Origin") && init.method === "POST") headers.set("Origin", base);
  if (cookie) headers.set("Cookie", cookie);
  const res = await fetch(`${base}${pathname}`, { ...init, headers, redirect: "manual" });
  return { status: res.status, type: res.headers.get("content-type") ?? "", body: await res.text(), location: res.headers.get("location") };
}

const post = (pathname: string, body: BodyInit, contentType: string, cookie = client) =>
  send(pathname, { method: "POST", body, headers: { "Content-Type": contentType }, duplex: "half" }, cookie);

/** Writes raw bytes to the server and reads whatever comes back until it closes (or 5 s pass). */
async function rawExchange(bytes: Buffer, { halfClose = false } = {}) {
  return new Promise<{ status: number | null; text: string }>((resolve) => {
    const socket = net.connect(port, "127.0.0.1");
    let text = "";
    const done = () => {
      const m = text.match(/^HTTP\/1\.1 (\d{3})/);
      resolve({ status: m ? Number(m[1]) : null, text });
    };
    socket.on("data", (d) => (text += d.toString("latin1")));
    socket.on("close", done);
    socket.on("error", () => socket.destroy());
    socket.setTimeout(5000, () => socket.destroy());
    socket.write(bytes, () => {
      if (halfClose) socket.end();
    });
  });
}

interface Streamed {
  status: number | null;
  text: string;
  /** Body bytes handed to the socket when the first byte of the answer arrived. */
  sentBeforeAnswer: number;
}

/**
 * Sends a request head, then a body of `total` bytes in 64 KB pieces (chunked frames when `chunked`) as fast as
 * the server takes them, and stops sending once an answer arrives; resolves when the answer is complete.
 */
async function streamBody(head: string, total: number, { chunked = false } = {}) {
  const piece = Buffer.alloc(64 * 1024, "a");
  return new Promise<Streamed>((resolve) => {
    const socket = net.connect(port, "127.0.0.1");
    let sent = 0;
    let ended = false;
    let text = "";
    let sentBeforeAnswer: number | null = null;
    const complete = () => {
      const end = text.indexOf("\r\n\r\n");
      if (end < 0) return false;
      const length = /\r\ncontent-length: *(\d+)/i.exec(text.slice(0, end));
      return length ? text.length >= end + 4 + Number(length[1]) : text.endsWith("\r\n0\r\n\r\n");
    };
    socket.on("data", (d) => {
      sentBeforeAnswer ??= sent;
      text += d.toString("latin1");
      if (complete()) socket.destroy();
    });
    socket.on("close", () => resolve({ status: Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1]) || null, text, sentBeforeAnswer: sentBeforeAnswer ?? sent }));
    socket.on("error", () => socket.destroy());
    socket.setTimeout(60_000, () => socket.destroy());
    const pump = () => {
      while (sentBeforeAnswer === null && sent < total) {
        const n = Math.min(piece.length, total - sent);
        sent += n;
        const bytes = chunked ? Buffer.concat([Buffer.from(`${n.toString(16)}\r\n`), piece.subarray(0, n), Buffer.from("\r\n")]) : piece.subarray(0, n);
        if (!socket.write(bytes)) return void socket.once("drain", pump);
      }
      if (chunked && sent >= total && !ended) {
        ended = true;
        socket.write("0\r\n\r\n");
      }
    };
    socket.write(head, pump);
  });
}

/** The sentence a page or JSON answer shows: the error page's paragraph, or the JSON's error. */
function sentence(answer: Answer) {
  if (answer.type.includes("json")) return (JSON.parse(answer.body) as { error?: string }).error ?? answer.body;
  return answer.body
    .replace(/<script[\s\S]*?<\/script>/g, "")
    .replace(/<[^>]+>/g, " ")
    .replace(/\s+/g, " ");
}

beforeAll(async () => {
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
    throw new Error("The app is not built; run `npx react-router build` (npm test builds it first).");
  }
  const { seedDemo } = await import("~/demo/seed.server");
  await seedDemo();
  port = await freePort();
  base = `http://127.0.0.1:${port}`;
  server = spawn(process.execPath, ["--import", "tsx", "server/main.ts"], {
    cwd: root,
    env: { ...process.env, NODE_ENV: "production", DIFFRACTORY_LOCAL: "1", PORT: String(port), APP_URL: base },
    stdio: ["ignore", "pipe", "pipe"],
  });
  server.stdout?.on("data", (d) => (serverLog += d));
  server.stderr?.on("data", (d) => (serverLog += d));
  await waitForPort(port, "the app under test");

  const res = await fetch(`${base}/sign-in`, {
    method: "POST",
    body: new URLSearchParams({ email: "owner@halvorsen.example", password: PASSWORD }),
    headers: { Origin: base, "Content-Type": "application/x-www-form-urlencoded" },
    redirect: "manual",
  });
  expect(res.status).toBe(302);
  client = res.headers
    .getSetCookie()
    .find((c) => c.startsWith("diffractory_session="))!
    .split(";")[0];
  const made = await post(
    "/client/requests/new",
    new URLSearchParams({ title: "Cathode batch 12", technique: "powder_reflection", ...SAMPLE_FIELDS }),
    "application/x-www-form-urlencoded",
  );
  expect(made.status, made.body.slice(0, 300)).toBe(302);
  draftId = made.location!.split("/")[3];
}, 120_000);

afterAll(async () => {
  if (server && server.exitCode === null) {
    server.kill("SIGTERM");
    await new Promise((r) => server!.once("exit", r));
  }
});

const FORM = "application/x-www-form-urlencoded";
const samplesForm = (extra: Record<string, string> = {}) =>
  new URLSearchParams({ title: "Cathode batch 13", technique: "powder_reflection", ...SAMPLE_FIELDS, ...extra }).toString();

interface WireCase {
  kind: string;
  what: string;
  send: () => Promise<Answer>;
  status: number;
  says: RegExp;
}

const BOUNDARY = "----diffractory-test-boundary";
const CASES: WireCase[] = [
  {
    kind: "oversized body",
    what: "a 2 MB form with its length declared",
    send: () => post("/client/requests/new", `${samplesForm()}&notes=${"x".repeat(2_000_000)}`, FORM),
    status: 413,
    says: /The request is too large: forms and API bodies are at most 1 MB/,
  },
  {
    kind: "oversized body",
    what: "a 2 MB form sent in chunks without a declared length",
    send: () => {
      const chunk = new TextEncoder().encode(`a=${"x".repeat(64 * 1024)}&`);
      let sent = 0;
      const body = new ReadableStream<Uint8Array>({
        pull(controller) {
          if (sent++ >= 32) controller.close();
          else controller.enqueue(chunk);
        },
      });
      return post("/client/requests/new", body, FORM);
    },
    status: 413,
    says: /at most 1 MB/,
  },
  {
    kind: "oversized body",
    what: "a 2 MB provider event",
    send: () => post("/api/webhooks/payments", JSON.stringify({ id: "evt_big", pad: "x".repeat(2_000_000) }), "application/json", ""),
    status: 413,
    says: /at most 1 MB/,
  },
  {
    kind: "truncated body",
    what: "a multipart form cut off before its closing boundary",
    send: () =>
      post(
        "/client/requests/new",
        `--${BOUNDARY}\r\nContent-Disposition: form-data; name="title"\r\n\r\nCathode batch 14\r\n--${BOUNDARY}\r\nContent-Disposition: form-data; name="technique"\r\n\r\npowder_refl`,
        `multipart/form-data; boundary=${BOUNDARY}`,
      ),
    status: 400,
    says: /The request could not be read; it may have been cut off on the way\./,
  },
  {
    kind: "wrong Content-Type",
    what: "the samples form sent as JSON",
    send: () => post("/client/requests/new", JSON.stringify({ title: "Cathode batch 15" }), "application/json"),
    status: 415,
    says: /This address takes a form/,
  },
  {
    kind: "wrong Content-Type",
    what: "the samples form sent as plain text",
    send: () => post("/client/requests/new", samplesForm(), "text/plain"),
    status: 415,
    says: /This address takes a form/,
  },
  {
    kind: "wrong Content-Type",
    what: "the hazards form with multipart but no boundary",
    send: () => post(`/client/requests/${draftId}/edit/hazards`, "samples[0].afterMeasurement=return", "multipart/form-data"),
    status: 415,
    says: /This address takes a form/,
  },
  {
    kind: "wrong Content-Type",
    what: "marking notifications read with a CSV body",
    send: () => post("/api/notifications", "all=maybe", "text/csv"),
    status: 400,
    says: /Send \{"all": true\}/,
  },
  {
    kind: "invalid UTF-8",
    what: "a form whose title bytes are Latin-1",
    send: () => post("/client/requests/new", Buffer.concat([Buffer.from(`${samplesForm()}&title=Kathodencharge `), Buffer.from([0xe4, 0xfc, 0xff])]), FORM),
    status: 400,
    says: /The form is not UTF-8 text/,
  },
  {
    kind: "invalid UTF-8",
    what: "a form whose percent-escapes are not UTF-8",
    send: () => post("/client/requests/new", `${samplesForm()}&title=%FF%FEbatch`, FORM),
    status: 400,
    says: /The form is not UTF-8 text/,
  },
  {
    kind: "invalid UTF-8",
    what: "a provider event whose bytes are not UTF-8",
    send: () =>
      post("/api/webhooks/payments", Buffer.concat([Buffer.from('{"id": "evt_'), Buffer.from([0xc3, 0x28]), Buffer.from('"}')]), "application/json", ""),
    status: 400,
    says: /The request body is not UTF-8 text\./,
  },
  {
    kind: "NUL byte in text",
    what: "a form field with %00",
    send: () => post("/client/requests/new", `${samplesForm()}&title=batch%00one`, FORM),
    status: 400,
    says: /NUL character/,
  },
  {
    kind: "NUL byte in text",
    what: "marking notifications read with a form field holding %00 (read through the one form reader)",
    send: () => post("/api/notifications", "all=true%00", FORM),
    status: 400,
    says: /NUL character/,
  },
  {
    kind: "very long URL",
    what: "a 10,000-character directory search in the URL",
    send: () => send(`/api/labs?q=${"a".repeat(10_000)}`),
    status: 400,
    says: /q has at most 100 characters\./,
  },
  {
    kind: "very long URL",
    what: "a 12,000-character order id in the path",
    send: () => send(`/client/orders/${"9".repeat(12_000)}`),
    status: 404,
    says: /No such order|not found|Not found/i,
  },
  {
    kind: "SQL metacharacters",
    what: "an order id that is an injection",
    send: () => send(`/client/orders/${encodeURIComponent("1' OR '1'='1")}`),
    status: 404,
    says: /No such order|not found|Not found/i,
  },
  {
    kind: "cross-site form",
    what: "a form posted from another site",
    send: () => send("/client/requests/new", { method: "POST", body: samplesForm(), headers: { "Content-Type": FORM, Origin: "https://evil.example" } }),
    status: 403,
    says: /Refused: this request came from another site\./,
  },
  {
    kind: "cross-site form",
    what: "a form posted with an https Origin of this host to the http app (another origin: the scheme differs)",
    send: () =>
      send("/client/requests/new", {
        method: "POST",
        body: samplesForm(),
        headers: { "Content-Type": FORM, Origin: base.replace(/^http:/, "https:") },
      }),
    status: 403,
    says: /Refused: this request came from another site\./,
  },
  {
    kind: "NUL byte in text",
    what: "create account with %00 in the account name",
    send: () =>
      post("/create-account", "kind=client&name=Ada%00Quill&email=nul%40quill.example&password=long-enough-password&organisationName=Quill+Labs", FORM, ""),
    status: 400,
    says: /NUL character/,
  },
  {
    kind: "invalid UTF-8",
    what: "create account with an account name in Latin-1 bytes",
    send: () =>
      post(
        "/create-account",
        Buffer.concat([
          Buffer.from("kind=client&email=latin1%40quill.example&password=long-enough-password&organisationName=Quill+Labs&name=J"),
          Buffer.from([0xf6, 0x72, 0x67]),
        ]),
        FORM,
        "",
      ),
    status: 400,
    says: /The form is not UTF-8 text/,
  },
  {
    kind: "NUL byte in text",
    what: "GET /labs/%00 (a lab profile address with a NUL)",
    send: () => send("/labs/%00", {}, ""),
    status: 404,
    says: /No approved lab is listed at this address\./,
  },
];

describe("bad input on the wire is refused with a sentence and changes nothing", () => {
  for (const c of CASES) {
    it(`${c.kind}: ${c.what}`, async () => {
      const before = await snapshot();
      const answer = await c.send();
      const after = await snapshot();
      expect(answer.status, answer.body.slice(0, 400)).toBe(c.status);
      expect(sentence(answer)).toMatch(c.says);
      expect(changedTables(before, after)).toEqual([]);
    });
  }

  it("a URL longer than the server reads (40,000 characters) is 431 with a sentence", async () => {
    const answer = await rawExchange(Buffer.from(`GET /labs?q=${"a".repeat(40_000)} HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n`));
    expect(answer.status).toBe(431);
    expect(answer.text).toMatch(/The address or headers are too long/);
  });

  it("a body that stops before its declared length gets no 500, changes nothing, and the server carries on", async () => {
    const before = await snapshot();
    const body = samplesForm().slice(0, 120);
    const head = `POST /client/requests/new HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nOrigin: ${base}\r\nCookie: ${client}\r\nContent-Type: ${FORM}\r\nContent-Length: 5000\r\n\r\n`;
    const answer = await rawExchange(Buffer.from(head + body), { halfClose: true });
    // The client has stopped sending: the server either answers 400 or simply closes; never 5xx.
    if (answer.status !== null) expect(answer.status).toBe(400);
    expect(changedTables(before, await snapshot())).toEqual([]);
    expect((await send("/api/health", {}, "")).status).toBe(200);
  });

  it("markup and script in a title and a label are stored as text and shown escaped", async () => {
    const script = '<script>alert("owned")</script>';
    const img = "<img src=x onerror=alert(1)>";
    const made = await post("/client/requests/new", samplesForm({ title: `Batch ${script}`, "samples[0].label": `LFP ${img}` }), FORM);
    expect(made.status, made.body.slice(0, 300)).toBe(302);
    const id = made.location!.split("/")[3];
    for (const page of [`/client/requests/${id}/edit/samples`, "/client/requests"]) {
      const html = (await send(page)).body;
      expect(html, page).toContain("Batch &lt;script&gt;");
      expect(html, page).not.toContain(script);
      expect(html, page).not.toContain(img);
    }
  });

  it("TRACE, and methods the app does not take, are 405 with an Allow header; TRACK is refused as unreadable", async () => {
    for (const [method, target] of [
      ["TRACE", "/"],
      ["TRACE", "/client"],
      ["PROPFIND", "/labs"],
    ]) {
      const answer = await rawExchange(
        Buffer.from(`${method} ${target} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nCookie: ${client}\r\nConnection: close\r\n\r\n`),
      );
      expect(answer.status, `${method} ${target}: ${answer.text.slice(0, 300)}`).toBe(405);
      expect(answer.text).toMatch(/^Allow: GET, HEAD, OPTIONS, POST, PUT, PATCH, DELETE\r$/im);
    }
    // Node's HTTP parser knows no TRACK, so it never reaches the app: a 400 with a sentence (server/main.ts).
    const track = await rawExchange(Buffer.from(`TRACK / HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nConnection: close\r\n\r\n`));
    expect(track.status).toBe(400);
  });

  it("sign-in with redirectTo=%2F%09%2Fevil.example%2F goes to the workspace, not to //evil.example/", async () => {
    const answer = await post("/sign-in", "email=owner%40halvorsen.example&password=diffractory-demo&redirectTo=%2F%09%2Fevil.example%2F", FORM, "");
    expect(answer.status, answer.body.slice(0, 300)).toBe(302);
    expect(answer.location).toBe("/client");
  });

  it("sign-in with a CR in redirectTo is a redirect to the workspace, not a 500 after the session was written", async () => {
    const answer = await post("/sign-in", "email=owner%40halvorsen.example&password=diffractory-demo&redirectTo=%2F%0D%2Fevil.example%2F", FORM, "");
    expect(answer.status, answer.body.slice(0, 300)).toBe(302);
    expect(answer.location).toBe("/client");
  });

  it("answers to a signed-in person are Cache-Control: private, no-store; public answers keep their caching", async () => {
    const cacheOf = async (pathname: string, cookie = client) =>
      (await fetch(`${base}${pathname}`, { headers: cookie ? { Cookie: cookie } : {}, redirect: "manual" })).headers.get("cache-control");
    for (const page of ["/client", "/client/requests", "/labs", "/account/security", "/no-such-page"])
      expect(await cacheOf(page), page).toBe("private, no-store");
    // A route's own no-store stays as it is.
    expect(await cacheOf("/api/me")).toBe("private, no-store");
    // The answer that starts a session carries it too.
    const signIn = await fetch(`${base}/sign-in`, {
      method: "POST",
      body: new URLSearchParams({ email: "owner@halvorsen.example", password: PASSWORD }),
      headers: { Origin: base, "Content-Type": FORM },
      redirect: "manual",
    });
    expect(signIn.headers.get("cache-control")).toBe("private, no-store");
    // Without a session, public pages are as before; the directory API stays public (the same for everyone).
    expect(await cacheOf("/labs", "")).toBeNull();
    expect(await cacheOf("/api/labs", "")).toBe("public, max-age=30");
    expect(await cacheOf("/api/labs")).toBe("public, max-age=30");
    // No validator on a signed-in answer: with no-store a browser never revalidates, and an ETag there would
    // only invite a 304 path that cannot be used (docs/decisions/015-no-conditional-gets-for-private-pages.md).
    for (const page of ["/client/requests", "/client/requests.data"]) {
      const answer = await fetch(`${base}${page}`, { headers: { Cookie: client } });
      expect(answer.headers.get("etag"), page).toBeNull();
      await answer.arrayBuffer();
    }
  });

  // The attack as sent: 50 MB bodies to an address anyone may post to, and to a signed-in JSON address, declared
  // and chunked. Each is answered 413 at once, long before the body is through, and changes nothing.
  const BIG = 50_000_000;
  // Bytes the app under test has read through read(2) since it started, sockets included (Linux /proc/PID/io).
  const serverRead = () => Number(/^rchar:\s+(\d+)/m.exec(fs.readFileSync(`/proc/${server!.pid}/io`, "utf8"))![1]);
  const bigHead = (pathname: string, type: string, length: number | "chunked", cookie = "") =>
    `POST ${pathname} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nOrigin: ${base}\r\n${cookie ? `Cookie: ${cookie}\r\n` : ""}Content-Type: ${type}\r\n` +
    `${length === "chunked" ? "Transfer-Encoding: chunked" : `Content-Length: ${length}`}\r\n\r\n`;
  for (const c of [
    { what: "a 50 MB create-account form with its length declared", path: "/create-account", type: FORM, chunked: false, signedIn: false },
    { what: "a 50 MB create-account form in chunks without a declared length", path: "/create-account", type: FORM, chunked: true, signedIn: false },
    {
      what: "a 50 MB JSON body to POST /api/notifications with its length declared",
      path: "/api/notifications",
      type: "application/json",
      chunked: false,
      signedIn: true,
    },
    { what: "a 50 MB JSON body to POST /api/notifications in chunks", path: "/api/notifications", type: "application/json", chunked: true, signedIn: true },
  ]) {
    it(`oversized body: ${c.what} is answered 413 before it is through, and changes nothing`, async () => {
      const before = await snapshot();
      const readBefore = serverRead();
      const answer = await streamBody(bigHead(c.path, c.type, c.chunked ? "chunked" : BIG, c.signedIn ? client : ""), BIG, { chunked: c.chunked });
      expect(answer.status, answer.text.slice(0, 400)).toBe(413);
      expect(answer.text).toMatch(/The request is too large: forms and API bodies are at most 1 MB/);
      // The answer comes before the body is through, and the server itself reads at most the limit plus the
      // 16 MB it drains of a refused body (app/utils/body-limit.server.ts), then stops reading. Measured on the
      // server's side: how much the client had pushed when it noticed also counts what the loopback's socket
      // buffers hold, which the kernel sizes (up to 4 MB sending and 32 MB receiving on this machine).
      expect(answer.sentBeforeAnswer).toBeLessThan(BIG);
      expect(serverRead() - readBefore).toBeLessThan(20_000_000);
      expect(changedTables(before, await snapshot())).toEqual([]);
    });
  }

  it("eight 50 MB bodies at once (create account, and signed-in notifications) leave the server's peak memory and its health check as they were", {
    timeout: 120_000,
  }, async () => {
    // The peak resident memory of the app under test since it started (Linux /proc).
    const peak = () => Number(/VmHWM:\s+(\d+) kB/.exec(fs.readFileSync(`/proc/${server!.pid}/status`, "utf8"))![1]) * 1024;
    // A first request warms the server up (a cold start alone can take seconds).
    expect((await fetch(`${base}/api/health`)).status).toBe(200);
    const before = peak();
    const attack = Promise.all(
      Array.from({ length: 8 }, (_, i) =>
        streamBody(i % 2 ? bigHead("/api/notifications", "application/json", BIG, client) : bigHead("/create-account", FORM, BIG), BIG),
      ),
    );
    await new Promise((r) => setTimeout(r, 100));
    const started = performance.now();
    const health = await fetch(`${base}/api/health`);
    const healthMs = performance.now() - started;
    const answers = await attack;
    expect(answers.map((a) => a.status)).toEqual(Array(8).fill(413));
    expect(health.status).toBe(200);
    expect(healthMs).toBeLessThan(2000);
    expect(peak() - before).toBeLessThan(100_000_000);
  });

  it("logged no unexpected server error while refusing all of the above", () => {
    expect(serverLog).not.toMatch(/TypeError|SyntaxError|ReferenceError|Unhandled|error: (null value|invalid byte|value out of range)/);
  });
});
