// Local stand-in for S3: s3rver on loopback with the app's bucket and CORS for the app's origin.
import fs from "node:fs";
import path from "node:path";
import S3rver from "s3rver";
import { dataDir } from "./paths";
import { isMain } from "./process";

export interface S3FakeOptions {
  port: number;
  directory?: string;
  bucket?: string;
  origins?: string[];
}

function corsXml(origins: string[]) {
  const allowed = origins.map((o) => `<AllowedOrigin>${o}</AllowedOrigin>`).join("");
  return `<CORSConfiguration><CORSRule>${allowed}<AllowedMethod>GET</AllowedMethod><AllowedMethod>PUT</AllowedMethod><AllowedMethod>HEAD</AllowedMethod><AllowedHeader>*</AllowedHeader><ExposeHeader>ETag</ExposeHeader><MaxAgeSeconds>3000</MaxAgeSeconds></CORSRule></CORSConfiguration>`;
}

export async function startS3Fake(opts: S3FakeOptions) {
  const directory = opts.directory ?? path.join(dataDir, "s3");
  fs.mkdirSync(directory, { recursive: true });
  const server = new S3rver({
    address: "127.0.0.1",
    port: opts.port,
    directory,
    silent: true,
    configureBuckets: [{ name: opts.bucket ?? "diffractory-data", configs: [corsXml(opts.origins ?? ["*"])] }],
  });
  await server.run();
  return { close: () => server.close() };
}

if (isMain(import.meta.url)) {
  // S3_FAKE_ORIGINS (comma-separated) and S3_FAKE_DIR let a test run its own instance beside the shared one.
  const appPorts = [process.env.PORT ?? "3000", process.env.TEST_APP_PORT ?? "3100"];
  const origins = process.env.S3_FAKE_ORIGINS
    ? process.env.S3_FAKE_ORIGINS.split(",")
        .map((o) => o.trim())
        .filter(Boolean)
    : appPorts.flatMap((p) => [`http://127.0.0.1:${p}`, `http://localhost:${p}`]);
  await startS3Fake({
    port: Number(process.env.S3_FAKE_PORT ?? 54330),
    bucket: process.env.S3_BUCKET,
    origins,
    directory: process.env.S3_FAKE_DIR || undefined,
  });
  console.log(`s3 fake listening on 127.0.0.1:${process.env.S3_FAKE_PORT ?? 54330}`);
}
