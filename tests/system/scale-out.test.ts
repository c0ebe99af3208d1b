// More than one server: two app processes and two workers on one PostgreSQL, behind the round-robin proxy
// (services/proxy.ts). A session made through one server works on the other, an upload started on one is
// completed through the other, and every job — scan checks, outbox letters — runs exactly once.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";
import { SILICON } from "~/diffraction/structures";
import type { StartedUpload } from "~/domain/order-files";
import { fetchPut, uploadFile } from "~/components/order-upload";
import { startProxy, type RoundRobinProxy } from "../../services/proxy";
import { numberedOrderInsert } from "../setup/numbered-order";
import { sparePort, startStack, type Stack } from "./stack";

const PASSWORD = "diffractory-demo";
let stack: Stack;
let proxy: RoundRobinProxy;
let app1: string;
let app2: string;
let orderId = "";
let sampleId = "";

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 60_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > end) throw new Error(`Timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

/** Signs in with the form, as a browser on the proxy's origin would; returns the session cookie. */
async function signIn(base: string, email: string, headers: Record<string, string> = {}) {
  const res = await fetch(`${base}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: proxy.url, ...headers },
    body: new URLSearchParams({ email, password: PASSWORD }),
  });
  expect(res.status).toBe(302);
  const cookie = /diffractory_session=[^;]+/.exec(res.headers.get("set-cookie") ?? "")?.[0];
  expect(cookie).toBeTruthy();
  return cookie!;
}

async function me(base: string, cookie: string) {
  const res = await fetch(`${base}/api/me`, { headers: { Cookie: cookie } });
  return {
    status: res.status,
    upstream: res.headers.get("x-upstream"),
    body:
      res.status === 200
        ? ((await res.json()) as { user: { email: string }; organisations: { id: string; name: string }[]; activeOrganisationId: string | null })
        : null,
  };
}

async function postForm(url: string, cookie: string, fields: Record<string, string>, origin = proxy.url) {
  return fetch(url, {
    method: "POST",
    redirect: "manual",
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: origin, Cookie: cookie },
    body: new URLSearchParams(fields),
  });
}

async function postJson(url: string, cookie: string, body: unknown) {
  const res = await fetch(url, {
    method: "POST",
    headers: { "Content-Type": "application/json", Origin: proxy.url, Cookie: cookie },
    body: JSON.stringify(body),
  });
  return { status: res.status, body: (await res.json()) as Record<string, unknown> };
}

/** A silicon scan (Cu Kα), optionally padded with comment lines to about `padToBytes`. */
function siliconScan(seed: number, padToBytes = 0) {
  const line = "instrument log: generator 40 kV 40 mA, detector stable, no interruptions during this step";
  const comment = padToBytes > 0 ? Array.from({ length: Math.ceil(padToBytes / (line.length + 3)) }, () => line).join("\n") : `seed ${seed}`;
  return formatScanAsXy(
    simulatePattern({
      structure: SILICON,
      radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
      twoThetaMin: 20,
      twoThetaMax: 120,
      step: 0.02,
      background: { constant: 80 },
      noise: { seed },
    }),
    comment,
  );
}

/** Starts an upload on `startBase` and completes it on `completeBase`, with the bytes going straight to storage. */
async function uploadThrough(startBase: string, completeBase: string, cookie: string, name: string, text: string) {
  const blob = new Blob([text]);
  let started: StartedUpload | undefined;
  const answer = await uploadFile({
    file: blob,
    put: fetchPut,
    start: async () => {
      const res = await postJson(`${startBase}/lab/orders/${orderId}/uploads`, cookie, { name, size: blob.size, kind: "scan", sampleId });
      if (res.status !== 201) throw new Error(`start: ${res.status} ${JSON.stringify(res.body)}`);
      started = res.body as unknown as StartedUpload;
      return started;
    },
    complete: (fileId, body) => postJson(`${completeBase}/lab/orders/${orderId}/uploads/${fileId}`, cookie, { intent: "complete", ...body }),
  });
  return { started: started!, answer };
}

beforeAll(async () => {
  // The proxy's port is chosen first: the app servers must know their public origin (APP_URL) when they start.
  const proxyPort = await sparePort();
  stack = await startStack({
    name: "scale_out",
    apps: 2,
    workers: 2,
    env: { APP_URL: `http://127.0.0.1:${proxyPort}`, TRUST_PROXY: "loopback" },
  });
  [app1, app2] = stack.apps.map((a) => a.url);
  proxy = await startProxy({ port: proxyPort, upstreams: [app1, app2] });

  // An order of the demo client at the demo lab that is being measured, with one silicon sample.
  const one = async (text: string, values: unknown[] = []) => (await stack.sql<{ id: string }>(text, values))[0];
  const client = await one("select id from organisations where slug = 'halvorsen-cathode-works'");
  const lab = await one("select id from organisations where slug = 'granite-ridge-characterisation'");
  const owner = await one("select id from users where email = 'owner@halvorsen.example'");
  const instrument = await one("select id from instruments where lab_id = $1 and anode = 'Cu' limit 1", [lab.id]);
  const request = await one(
    "insert into requests (organisation_id, created_by, title, state, range_min, range_max) values ($1, $2, 'Two-server test', 'awarded', 10, 120) returning id",
    [client.id, owner.id],
  );
  sampleId = (
    await one(
      "insert into samples (request_id, position, label, formula, expected_phase, crystal_system, centering, cell_a) values ($1, 0, 'SI-2S', 'Si', 'silicon', 'cubic', 'F', 5.431) returning id",
      [request.id],
    )
  ).id;
  const quote = await one(
    "insert into quotes (request_id, lab_id, instrument_id, state, line_items, total_minor, currency, valid_until, turnaround_days) values ($1, $2, $3, 'accepted', '[]', 10000, 'EUR', now() + interval '7 days', 5) returning id",
    [request.id, lab.id, instrument.id],
  );
  orderId = (
    await one(
      numberedOrderInsert(
        "request_id, quote_id, client_organisation_id, lab_id, state, amount_minor, currency",
        "$1::uuid, $2::uuid, $3::uuid, $4::uuid, 'measuring', 10000, 'EUR'",
      ),
      [request.id, quote.id, client.id, lab.id],
    )
  ).id;
});

afterAll(async () => {
  await proxy?.close();
  await stack?.stop();
});

describe("two app servers behind a proxy", () => {
  it("answers the load balancer's probe on each server and through the proxy", async () => {
    for (const base of [app1, app2, proxy.url, proxy.url]) {
      const res = await fetch(`${base}/api/health?scope=app`);
      expect(res.status).toBe(200);
      expect(await res.json()).toEqual({ status: "ok", checks: { database: "ok" } });
    }
  });

  it("a session made through the proxy works on both servers, and a change made on one is seen on the other", async () => {
    const cookie = await signIn(proxy.url, "consultant@fieldnotes.example");
    const [on1, on2] = [await me(app1, cookie), await me(app2, cookie)];
    expect(on1.status).toBe(200);
    expect(on2.body).toEqual(on1.body);
    expect(on1.body!.user.email).toBe("consultant@fieldnotes.example");
    expect(on1.body!.organisations.length).toBe(2);

    // Switch the active organisation directly on server 2 (the browser's Origin is the proxy's: APP_URL allows it)…
    const other = on1.body!.organisations.find((o) => o.id !== on1.body!.activeOrganisationId)!;
    const switched = await postForm(`${app2}/switch-organisation`, cookie, { organisationId: other.id });
    expect(switched.status).toBe(302);
    // …and server 1, and the proxy alternating between both, see it at once.
    expect((await me(app1, cookie)).body!.activeOrganisationId).toBe(other.id);
    const viaProxy = await Promise.all([0, 1, 2, 3].map(() => me(proxy.url, cookie)));
    expect(new Set(viaProxy.map((r) => r.upstream))).toEqual(new Set(["0", "1"]));
    for (const r of viaProxy) expect(r.body).toMatchObject({ user: { email: "consultant@fieldnotes.example" }, activeOrganisationId: other.id });

    // Signing out on server 1 ends the session on server 2 too.
    const out = await postForm(`${app1}/sign-out`, cookie, {});
    expect(out.status).toBe(302);
    expect((await me(app2, cookie)).status).toBe(401);
  });

  it("takes the client's address from X-Forwarded-For (TRUST_PROXY) and keeps refusing writes from other sites", async () => {
    await signIn(proxy.url, "owner@pinecrest.example", { "X-Forwarded-For": "203.0.113.77" });
    const rows = await stack.sql<{ client_address: string }>(
      "select client_address from sign_in_attempts where email = 'owner@pinecrest.example' and succeeded order by at desc limit 1",
    );
    expect(rows[0].client_address).toBe("203.0.113.77");
    const foreign = await fetch(`${proxy.url}/sign-in`, {
      method: "POST",
      redirect: "manual",
      headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: "https://elsewhere.example" },
      body: new URLSearchParams({ email: "owner@pinecrest.example", password: PASSWORD }),
    });
    expect(foreign.status).toBe(403);
  });

  it("an upload started on server 1 is completed through server 2 (multipart, straight to storage); its scan check runs once", async () => {
    const cookie = await signIn(proxy.url, "operator@graniteridge.example");
    // Above 16 MiB the upload is multipart: the storage upload id lives in the database row, not in server 1.
    const text = siliconScan(641, 17 * 1024 * 1024);
    const { started, answer } = await uploadThrough(app1, app2, cookie, "si-two-servers.xy", text);
    expect("parts" in started.upload && started.upload.parts.length).toBe(3);
    expect(answer.status).toBe(200);
    expect(answer.body).toMatchObject({ state: "stored", name: "si-two-servers.xy" });
    const [file] = await stack.sql<{ state: string; size_bytes: number }>("select state, size_bytes from order_files where id = $1", [started.fileId]);
    expect(file).toEqual({ state: "stored", size_bytes: Buffer.byteLength(text) });

    const check = await until(
      "the scan check",
      async () => {
        const [c] = await stack.sql<{ status: string; verdict: string | null; attempts: number }>(
          "select status, verdict, attempts from scan_checks where file_id = $1",
          [started.fileId],
        );
        return c && (c.status === "done" || c.status === "failed") ? c : null;
      },
      90_000,
    );
    expect(check).toEqual({ status: "done", verdict: "consistent", attempts: 1 });
    // The job is marked completed once its handler returns, a moment after the check's row says done.
    const jobs = await until(
      "the scan-check job to finish",
      async () => {
        const rows = await stack.sql<{ state: string; retry_count: number }>(
          "select state, retry_count from pgboss.job where name = 'scan-check' and data->>'fileId' = $1",
          [started.fileId],
        );
        return rows.length > 0 && rows.every((r) => r.state !== "active" && r.state !== "created" && r.state !== "retry") ? rows : null;
      },
      30_000,
    );
    expect(jobs).toEqual([{ state: "completed", retry_count: 0 }]);
  });

  it("every job runs once with two workers: a batch of scan checks and of letters", async () => {
    const operator = await signIn(proxy.url, "operator@graniteridge.example");
    const owner = await signIn(proxy.url, "owner@halvorsen.example");

    // Let the letters the demo seed queued go out first, so the provider's counter starts from a quiet queue.
    await until("the seeded outbox to drain", async () => {
      const [r] = await stack.sql<{ n: number }>("select count(*)::int as n from outbox_messages where status = 'queued'");
      return r.n === 0;
    });
    const before = (await (await fetch(`${stack.fakes.mail.url}/_fake/messages`)).json()) as { sendAttempts: number };

    // Six scans, each started and completed through the proxy (so on alternating servers), and eight invitations.
    const SCANS = 6;
    const LETTERS = 8;
    const uploads = await Promise.all(
      Array.from({ length: SCANS }, (_, i) => uploadThrough(proxy.url, proxy.url, operator, `batch-${i}.xy`, siliconScan(700 + i))),
    );
    for (const u of uploads) expect(u.answer.status).toBe(200);
    const fileIds = uploads.map((u) => u.started.fileId);
    const invited = Array.from({ length: LETTERS }, (_, i) => `invitee-${i}@two-servers.example`);
    const answers = await Promise.all(invited.map((email) => postForm(`${proxy.url}/client/members`, owner, { intent: "invite", email, role: "member" })));
    for (const a of answers) expect(a.status).toBe(302);
    expect(proxy.hits[0]).toBeGreaterThan(0);
    expect(proxy.hits[1]).toBeGreaterThan(0);

    const checks = await until(
      "every scan check",
      async () => {
        const rows = await stack.sql<{ file_id: string; status: string; attempts: number }>(
          "select file_id, status, attempts from scan_checks where file_id = any($1)",
          [fileIds],
        );
        return rows.length === SCANS && rows.every((r) => r.status === "done" || r.status === "failed") ? rows : null;
      },
      120_000,
    );
    for (const c of checks) expect(c).toMatchObject({ status: "done", attempts: 1 });
    const scanJobs = await stack.sql<{ file_id: string; n: number; retries: number }>(
      "select data->>'fileId' as file_id, count(*)::int as n, sum(retry_count)::int as retries from pgboss.job where name = 'scan-check' and data->>'fileId' = any($1) group by 1",
      [fileIds],
    );
    expect(scanJobs.length).toBe(SCANS);
    for (const j of scanJobs) expect(j).toMatchObject({ n: 1, retries: 0 });

    const letters = await until("every invitation letter", async () => {
      const rows = await stack.sql<{ id: string; to: string; status: string; attempts: number; job_id: string | null }>(
        `select id, "to", status, attempts, job_id from outbox_messages where "to" = any($1)`,
        [invited],
      );
      return rows.length === LETTERS && rows.every((r) => r.status === "sent") ? rows : null;
    });
    for (const l of letters) expect(l).toMatchObject({ status: "sent", attempts: 1 });
    // One mail-send job per letter, none retried.
    const mailJobs = await stack.sql<{ message_id: string; n: number; retries: number }>(
      "select data->>'messageId' as message_id, count(*)::int as n, sum(retry_count)::int as retries from pgboss.job where name = 'mail-send' and data->>'messageId' = any($1) group by 1",
      [letters.map((l) => l.id)],
    );
    expect(mailJobs.length).toBe(LETTERS);
    for (const j of mailJobs) expect(j).toMatchObject({ n: 1, retries: 0 });
    // The provider got one request per letter (its idempotency key would hide a repeat; the counter does not).
    const after = (await (await fetch(`${stack.fakes.mail.url}/_fake/messages`)).json()) as {
      sendAttempts: number;
      messages: { to: string[]; idempotencyKey: string | null }[];
    };
    expect(after.sendAttempts - before.sendAttempts).toBe(LETTERS);
    for (const email of invited) expect(after.messages.filter((m) => m.to.includes(email)).length).toBe(1);
  });
});
