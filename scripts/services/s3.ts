// The loopback S3 service for local use and tests: s3rver with one bucket whose CORS
// rules let the app's pages upload straight to it (presigned multipart PUTs).
import S3rver from "s3rver";

const port = Number(process.env.S3_PORT);
const directory = process.env.S3_DIR ?? "";
const bucket = process.env.S3_BUCKET ?? "rillbook";
const origin = process.env.APP_ORIGIN ?? "*";

const cors = `<CORSConfiguration>
  <CORSRule>
    <AllowedOrigin>${origin}</AllowedOrigin>
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>PUT</AllowedMethod>
    <AllowedMethod>POST</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

const server = new S3rver({
  address: "127.0.0.1",
  port,
  directory,
  silent: true,
  configureBuckets: [{ name: bucket, configs: [cors] }],
});

server.run().then(
  ({ port: p }) => console.log(`s3rver listening on 127.0.0.1:${p}, bucket ${bucket}, data in ${directory}`),
  (err: unknown) => {
    console.error("s3rver failed to start:", err);
    process.exit(1);
  },
);

for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => void server.close().finally(() => process.exit(0)));
}
