// Starts Diffractory's web server: Vite middleware with hot reload in development, the built app otherwise.
import express from "express";
import compression from "compression";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const dev = process.env.NODE_ENV !== "production";

const server = express();
server.disable("x-powered-by");
server.use(compression());

if (dev) {
  const vite = await import("vite");
  const viteDevServer = await vite.createServer({ root, server: { middlewareMode: true } });
  server.use(viteDevServer.middlewares);
  server.use(async (req, res, next) => {
    try {
      const source = (await viteDevServer.ssrLoadModule(path.join(root, "server/app.ts"))) as { app: express.Express };
      return source.app(req, res, next);
    } catch (error) {
      if (error instanceof Error) viteDevServer.ssrFixStacktrace(error);
      next(error);
    }
  });
} else {
  const clientDir = path.join(root, "build/client");
  // Fingerprinted assets never change; everything else is revalidated.
  server.use("/assets", express.static(path.join(clientDir, "assets"), { immutable: true, maxAge: "1y" }));
  // The few other public files are known at start, so only their paths reach the disk; every other request
  // would otherwise cost a failed stat() (and an Error) before the app sees it.
  const publicFiles = new Set(
    fs
      .readdirSync(clientDir, { recursive: true, withFileTypes: true })
      .filter((e) => e.isFile())
      .map((e) => "/" + path.relative(clientDir, path.join(e.parentPath, e.name)).split(path.sep).join("/"))
      .filter((p) => !p.startsWith("/assets/")),
  );
  const publicStatic = express.static(clientDir, { maxAge: "1h", index: false });
  server.use((req, res, next) => (publicFiles.has(req.path) ? publicStatic(req, res, next) : next()));
  const built = (await import(pathToFileURL(path.join(root, "build/server/index.js")).href)) as { app: express.Express };
  server.use(built.app);
}

const listener = server.listen(port, host, () => {
  console.log(`Diffractory is serving on http://${host}:${port}`);
});
// Requests Node refuses before the app sees them (a URL or headers beyond its limit, a malformed request line)
// get a sentence too, not an empty answer.
listener.on("clientError", (err: NodeJS.ErrnoException, socket) => {
  if (!socket.writable || err.code === "ECONNRESET") return socket.destroy();
  const [status, text] =
    err.code === "HPE_HEADER_OVERFLOW" ? [431, "The address or headers are too long; shorten the URL and try again."] : [400, "The request could not be read."];
  socket.end(
    `HTTP/1.1 ${status} ${status === 431 ? "Request Header Fields Too Large" : "Bad Request"}\r\nContent-Type: text/plain; charset=utf-8\r\nConnection: close\r\nContent-Length: ${Buffer.byteLength(text)}\r\n\r\n${text}`,
  );
});
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => listener.close(() => process.exit(0)));
}
