import { createDb } from "../../db/client";

/**
 * A direct connection to the test database as the app's own role (DATABASE_URL), for
 * arranging and checking what the app wrote. It has the app's rights and no more.
 */
export const testDb = createDb(
  process.env.DATABASE_URL ?? "postgres://rillbook_app@127.0.0.1:55420/rillbook",
  4,
);

/**
 * The owner role's connection (DATABASE_OWNER_URL), for tests that need rights the app
 * must not have: switching a trigger off, rewriting history to arrange a case.
 */
export const ownerDb = createDb(
  process.env.DATABASE_OWNER_URL ?? "postgres://rillbook_owner@127.0.0.1:55420/rillbook",
  2,
);
