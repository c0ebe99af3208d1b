// One body limit for every route, applied by the Express server (server/app.ts) before anything reads a body: a
// declared length over it is answered 413 at once, and a body sent without one (chunked) is counted as it streams
// and refused when it passes the limit, so no route, signed in or not, ever holds more than the limit in memory.
import type { NextFunction, Request as ExpressRequest, Response as ExpressResponse } from "express";
import { BODY_LIMIT_BYTES, TOO_LARGE } from "~/utils/form.server";

// Every route takes forms or JSON within the forms' limit: files go straight to storage on presigned URLs, and the
// upload API's start/complete steps and the payment provider's events are small JSON read through form.server.ts.
// A route that ever needs more gets its own named limit here.

/**
 * How much of a refused body is still read and dropped, so a client that is still sending gets the answer
 * rather than a reset connection. Past it the server stops reading (the client's sends stall, it reads the
 * 413 and gives up) and drops the connection after LINGER_MS: destroying it at once would reset it, and a
 * reset throws away the answer the client had not read yet.
 */
const DRAIN_CAP = 16 * BODY_LIMIT_BYTES;
const LINGER_MS = 2000;

/** The body reader of a refused chunked body fails with the refusal itself, so a route that lets it escape answers it. */
const refusal = () => Response.json({ error: TOO_LARGE }, { status: 413 });

function wantsJson(req: ExpressRequest) {
  return req.path.startsWith("/api/") || req.path.endsWith(".data") || (req.get("accept") ?? "").includes("application/json");
}

/** The 413 with its sentence, as JSON for API and data requests; nothing when an answer has already begun. */
function answerTooLarge(req: ExpressRequest, res: ExpressResponse) {
  if (res.headersSent) return;
  res.status(413);
  res.setHeader("Cache-Control", "no-store");
  if (wantsJson(req)) res.json({ error: TOO_LARGE });
  else res.type("text/plain").send(TOO_LARGE);
}

/** Counts dropped bytes; past DRAIN_CAP reading stops and the connection is given up a little later. */
function dropper(req: ExpressRequest) {
  let dropped = 0;
  let lingering = false;
  return (chunk: Buffer) => {
    dropped += chunk.length;
    if (dropped <= DRAIN_CAP || lingering) return;
    lingering = true;
    req.socket.pause();
    setTimeout(() => req.socket.destroy(), LINGER_MS).unref();
  };
}

/**
 * A chunked body's bytes are counted as they are handed to the reader (React Router's request body). Past the
 * limit the reader fails instead of getting more, and never sees an end: a cut-off body could parse as a whole
 * form. What the client still sends is dropped.
 */
function countStreamed(req: ExpressRequest, res: ExpressResponse, limit: number) {
  const emit = req.emit;
  let seen = 0;
  let drop: ((chunk: Buffer) => void) | null = null;
  req.emit = function (this: ExpressRequest, event: string | symbol, ...args: unknown[]) {
    if (drop && event === "data") {
      drop(args[0] as Buffer);
      return false;
    }
    if (drop && event === "end") return false;
    if (event === "data") {
      seen += (args[0] as Buffer).length;
      if (seen > limit) {
        drop = dropper(req);
        if (req.listenerCount("error") > 0) emit.call(this, "error", refusal());
        answerTooLarge(req, res);
        // The reader may have paused the stream; the rest is read only to be dropped.
        req.resume();
        return false;
      }
    }
    return emit.call(this, event, ...args);
  } as typeof req.emit;
}

/** Express middleware: refuses a body over the limit before any route reads it. */
export function limitBodies(req: ExpressRequest, res: ExpressResponse, next: NextFunction) {
  const declared = req.headers["content-length"];
  // Node's parser refuses a malformed length, and never hands over more than the declared one.
  if (declared !== undefined && Number(declared) > BODY_LIMIT_BYTES) {
    answerTooLarge(req, res);
    req.on("data", dropper(req));
    req.resume();
    return;
  }
  if (req.headers["transfer-encoding"] !== undefined) countStreamed(req, res, BODY_LIMIT_BYTES);
  next();
}
