// Clients of the hosted services through their official SDKs, pointed at the local fakes by configuration.
import { S3Client } from "@aws-sdk/client-s3";
import { Resend } from "resend";
import Stripe from "stripe";
import { config } from "~/config.server";

const g = globalThis as unknown as { __diffractoryServices?: { s3: S3Client; mail: Resend; payments: Stripe } };

function create() {
  const s3 = new S3Client({
    endpoint: config.s3.endpoint,
    region: config.s3.region,
    forcePathStyle: config.s3.forcePathStyle,
    credentials: { accessKeyId: config.s3.accessKeyId, secretAccessKey: config.s3.secretAccessKey },
    // With the SDK defaults, streamed uploads carry chunk framing and presigned PUTs an empty-body CRC.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  const mail = new Resend(config.mail.apiKey, { baseUrl: config.mail.baseUrl });
  const payments = new Stripe(config.payments.secretKey, {
    host: config.payments.host,
    port: config.payments.port,
    protocol: config.payments.protocol,
    maxNetworkRetries: 1,
    timeout: config.payments.timeoutMs,
  });
  return { s3, mail, payments };
}

export const services = (g.__diffractoryServices ??= create());
