// ESLint flat config: Next.js's rules, typescript-eslint's type-aware rules, the React hooks
// rules, and eslint-config-prettier last so formatting is Prettier's alone.
// Rules switched off for the whole tree are listed, with the reason, in DEVELOPERS.md.
import nextCoreWebVitals from "eslint-config-next/core-web-vitals";
import nextTypescript from "eslint-config-next/typescript";
import prettier from "eslint-config-prettier/flat";
import reactHooks from "eslint-plugin-react-hooks";
import tseslint from "typescript-eslint";

export default tseslint.config(
  {
    ignores: [
      ".next/**",
      ".next-*/**",
      "storage/**",
      "native/dsp/build/**",
      "test-results/**",
      "next-env.d.ts",
    ],
  },
  ...nextCoreWebVitals,
  ...nextTypescript,
  {
    files: ["**/*.{ts,tsx,mts,cts}"],
    extends: [tseslint.configs.recommendedTypeChecked],
    languageOptions: {
      parserOptions: {
        projectService: true,
        tsconfigRootDir: import.meta.dirname,
      },
    },
  },
  {
    files: ["**/*.{ts,tsx,js,jsx,mjs,cjs}"],
    plugins: { "react-hooks": reactHooks },
    rules: reactHooks.configs.flat.recommended.rules,
  },
  {
    rules: {
      // A leading underscore marks a value kept on purpose; `const { a, ...rest } = x` drops `a`.
      "@typescript-eslint/no-unused-vars": [
        "error",
        {
          argsIgnorePattern: "^_",
          varsIgnorePattern: "^_",
          caughtErrorsIgnorePattern: "^_",
          destructuredArrayIgnorePattern: "^_",
          ignoreRestSiblings: true,
        },
      ],
    },
  },
  {
    // Migrations are frozen in time and import no app code, so they take `Kysely<any>`
    // (Kysely's own guidance for migrations) rather than today's `Database`.
    files: ["migrations/**/*.ts"],
    rules: { "@typescript-eslint/no-explicit-any": "off" },
  },
  {
    // Tests read the app's JSON answers untyped (`api()` in tests/support/app.ts) and check
    // their shape with `expect`: a wrong shape fails the assertion, so the no-unsafe-* rules
    // would only add casts that restate what the assertions already prove.
    files: ["tests/**/*.ts"],
    rules: {
      "@typescript-eslint/no-unsafe-assignment": "off",
      "@typescript-eslint/no-unsafe-member-access": "off",
      "@typescript-eslint/no-unsafe-call": "off",
      "@typescript-eslint/no-unsafe-argument": "off",
      "@typescript-eslint/no-unsafe-return": "off",
    },
  },
  {
    // These two read provenance payloads of every age and kind, whose shapes changed over
    // time and have no schema per kind yet: each access is guarded (`?.`, `??`, `String()`),
    // and the payload stays loosely typed until the events get their own schemas.
    files: ["components/audit/event-sentence.ts", "lib/exports/record.ts"],
    rules: {
      "@typescript-eslint/no-explicit-any": "off",
      "@typescript-eslint/no-unsafe-assignment": "off",
      "@typescript-eslint/no-unsafe-member-access": "off",
      "@typescript-eslint/no-unsafe-call": "off",
      "@typescript-eslint/no-unsafe-argument": "off",
      "@typescript-eslint/no-unsafe-return": "off",
    },
  },
  prettier,
);
