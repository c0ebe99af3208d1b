// Server rendering, after React Router's default Node entry, with the response's CSP nonce on every script it
// writes: renderToPipeableStream's own, <ServerRouter>'s data, and (through NonceProvider) the <Scripts> and
// <ScrollRestoration> of root.tsx.
import { Writable } from "node:stream";
import { renderToPipeableStream } from "react-dom/server";
import type { AppLoadContext, EntryContext } from "react-router";
import { ServerRouter } from "react-router";
import { NonceProvider } from "./nonce";

export const streamTimeout = 5_000;

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  loadContext: AppLoadContext,
) {
  // https://httpwg.org/specs/rfc9110.html#HEAD
  if (request.method.toUpperCase() === "HEAD") return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  const nonce = loadContext.cspNonce || undefined;

  // No screen streams (no <Suspense> or <Await>), so the whole document is rendered before it is sent, in one
  // write with its length: React's few-kilobyte chunks written one by one cost a system call each.
  return new Promise((resolve, reject) => {
    let shellRendered = false;
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const chunks: Buffer[] = [];
    const body = new Writable({
      write(chunk: Buffer, _encoding, callback) {
        chunks.push(chunk);
        callback();
      },
      final(callback) {
        clearTimeout(timeoutId);
        timeoutId = undefined;
        const html = Buffer.concat(chunks);
        responseHeaders.set("Content-Type", "text/html");
        responseHeaders.set("Content-Length", String(html.byteLength));
        resolve(new Response(html, { headers: responseHeaders, status: responseStatusCode }));
        callback();
      },
    });

    const { pipe, abort } = renderToPipeableStream(
      <NonceProvider value={nonce ?? ""}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceProvider>,
      {
        nonce,
        onAllReady() {
          shellRendered = true;
          pipe(body);
        },
        onShellError(error: unknown) {
          clearTimeout(timeoutId);
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          // Errors inside the shell are logged here; shell errors are logged by React Router.
          if (shellRendered) console.error(error);
        },
      },
    );
  });
}
