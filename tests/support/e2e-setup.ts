// Runs with every end-to-end test file: a page that broke a rule of the
// Content-Security-Policy (a blocked script, upload, media load …) fails the file.
import { afterAll, expect } from "vitest";
import { cspViolations } from "./browser";

afterAll(() => {
  expect(cspViolations, "Content-Security-Policy violations reported by chromium").toEqual([]);
});
