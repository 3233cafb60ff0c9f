// A client of the test profile's bucket (s3rver, which takes only its fixed key pair), for
// tests that look at the stored objects directly.
import { S3Client } from "@aws-sdk/client-s3";

export function testBucketClient(): S3Client {
  return new S3Client({
    endpoint: process.env.S3_ENDPOINT,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" },
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}
