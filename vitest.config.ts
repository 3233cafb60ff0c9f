import { fileURLToPath } from "node:url";
import { defineConfig } from "vitest/config";

const root = fileURLToPath(new URL(".", import.meta.url));

// One config, three projects: unit and reference tests need nothing running;
// integration tests need the test profile's PostgreSQL, s3rver and mail sink;
// e2e tests need the built app served as well (scripts/test.sh starts them all).
export default defineConfig({
  resolve: {
    alias: {
      "@/": root,
      // `server-only` guards the Next.js bundle; under vitest every module is server code.
      "server-only": `${root}tests/support/server-only-stub.ts`,
    },
  },
  test: {
    projects: [
      {
        extends: true,
        test: { name: "unit", include: ["tests/unit/**/*.test.ts"], environment: "node" },
      },
      {
        extends: true,
        test: {
          name: "reference",
          include: ["tests/reference/**/*.test.ts"],
          environment: "node",
          testTimeout: 300_000,
        },
      },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          testTimeout: 60_000,
          fileParallelism: false,
        },
      },
      {
        extends: true,
        test: {
          name: "e2e",
          include: ["tests/e2e/**/*.test.ts"],
          setupFiles: ["tests/support/e2e-setup.ts"],
          environment: "node",
          testTimeout: 120_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
