import "./lib/demo-env";
import { createDb } from "../db/client";
import { seed } from "./seed/demo-lab";
import { env } from "../lib/env";

const db = createDb(env().DATABASE_URL, 2);
seed(db)
  .then((r) =>
    console.log(
      r.usersAdded || r.presetsAdded || r.discsAdded
        ? `seeded the demo lab (${r.usersAdded} people, ${r.presetsAdded} curve presets, ${r.discsAdded} discs)`
        : "demo lab already seeded",
    ),
  )
  .catch((err) => {
    console.error(err);
    process.exitCode = 1;
  })
  .finally(() => db.destroy());
