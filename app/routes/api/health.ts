// GET /api/health — public liveness of the app and each service it depends on (503 naming the failing one);
// GET /api/health?scope=app — this server and its database only (the load balancer's probe).
import { HeadBucketCommand } from "@aws-sdk/client-s3";
import { config } from "~/config.server";
import { pingDatabase } from "~/models/platform/health.server";
import { services } from "~/utils/services.server";
import type { Route } from "./+types/health";

type CheckResult = "ok" | string;

async function timed(check: () => Promise<unknown>, ms = 3000): Promise<CheckResult> {
  let timer: ReturnType<typeof setTimeout> | undefined;
  try {
    await Promise.race([check(), new Promise((_, reject) => (timer = setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms)))]);
    return "ok";
  } catch (err) {
    // Drizzle wraps the driver's error ("Failed query: …"); the cause says what is wrong (refused, shutting down).
    const e = ((err as { cause?: unknown }).cause ?? err) as Error;
    return `failing: ${e.message || e.name}`;
  } finally {
    clearTimeout(timer);
  }
}

// Public by design: monitoring asks without signing in, and the answer names no secrets.
// `?scope=app` is the load balancer's probe: this server and its database only, so an outage of a provider
// that every server shares (storage, e-mail, payments) does not take every server out of rotation at once.
export async function loader({ request }: Route.LoaderArgs) {
  if (new URL(request.url).searchParams.get("scope") === "app") {
    return answer({ database: await timed(pingDatabase) });
  }
  const [database, storage, mail, payments] = await Promise.all([
    timed(pingDatabase),
    timed(() => services.s3.send(new HeadBucketCommand({ Bucket: config.s3.bucket }))),
    timed(async () => {
      const { error } = await services.mail.domains.list();
      if (error) throw new Error(error.message);
    }),
    timed(() => services.payments.balance.retrieve()),
  ]);
  return answer({ database, storage, mail, payments });
}

function answer(checks: Record<string, CheckResult>) {
  const ok = Object.values(checks).every((c) => c === "ok");
  return Response.json({ status: ok ? "ok" : "degraded", checks }, { status: ok ? 200 : 503, headers: { "Cache-Control": "no-store" } });
}
