import { type Kysely, sql } from "kysely";
import type { Database, DiscFormat } from "../../db/types";
import { refreshSearch } from "../../lib/catalogue/records";
import { appendEvent, appendEvents, type NewEvent } from "../../lib/provenance";
import { seededRandom } from "../../lib/seeded-random";
import { assignSide, lockSides } from "../../lib/sides/lifecycle";

/**
 * The demo lab's shelves: a few hundred invented discs across formats and eras, from
 * invented labels and invented performers, in a handful of accessions. Deterministic
 * (seeded PRNG), so every demo lab looks the same.
 */

const accessions = [
  {
    identifier: "MH-2025-014",
    source: "Bequest of the Orlan family: a parlour collection of 78s",
    receivedOn: "2025-03-11",
  },
  {
    identifier: "MH-2025-031",
    source: "Transfer from the Wexcombe regional broadcaster's disc library",
    receivedOn: "2025-07-02",
  },
  {
    identifier: "MH-2026-002",
    source: "Donation: home and studio lacquers from a recording service's estate",
    receivedOn: "2026-01-19",
  },
  {
    identifier: "MH-2026-009",
    source: "Purchase at auction: early microgroove and vinyl 78 pressings",
    receivedOn: "2026-04-27",
  },
  {
    identifier: "MH-2026-017",
    source: "Field recordings deposited by the Saltmarsh folklore society",
    receivedOn: "2026-09-08",
  },
];

interface Family {
  format: DiscFormat;
  labels: string[];
  speed: number;
  groove: "coarse" | "micro";
  diameters: number[];
  years: [number, number];
  accession: number;
  base?: Array<"aluminium" | "glass" | "card" | "unknown">;
  count: number;
}

const families: Family[] = [
  {
    format: "shellac_78",
    labels: ["Brindlecord", "Quellstone", "Varrowby", "Ashgrove Phonic", "Oxley & Vane"],
    speed: 78,
    groove: "coarse",
    diameters: [10, 10, 12],
    years: [1905, 1955],
    accession: 0,
    count: 150,
  },
  {
    format: "shellac_78",
    labels: ["Tarnwell", "Pellory"],
    speed: 80,
    groove: "coarse",
    diameters: [10],
    years: [1908, 1926],
    accession: 0,
    count: 20,
  },
  {
    format: "transcription",
    labels: ["Cindermoor Transcriptions", "Wexcombe Broadcast Service"],
    speed: 33.33,
    groove: "coarse",
    diameters: [16],
    years: [1934, 1958],
    accession: 1,
    base: ["aluminium", "glass", "unknown"],
    count: 40,
  },
  {
    format: "instantaneous_lacquer",
    labels: ["Fenlow Recording Service", "Home recording"],
    speed: 78,
    groove: "coarse",
    diameters: [10, 12, 8],
    years: [1936, 1954],
    accession: 2,
    base: ["aluminium", "glass", "card", "unknown"],
    count: 45,
  },
  {
    format: "vinyl_78",
    labels: ["Quellstone", "Varrowby"],
    speed: 78,
    groove: "coarse",
    diameters: [10, 12],
    years: [1944, 1958],
    accession: 3,
    count: 15,
  },
  {
    format: "microgroove_lp",
    labels: ["Larkspur Microgroove", "Brindlecord"],
    speed: 33.33,
    groove: "micro",
    diameters: [10, 12],
    years: [1949, 1962],
    accession: 3,
    count: 25,
  },
  {
    format: "instantaneous_lacquer",
    labels: ["Saltmarsh field unit"],
    speed: 78,
    groove: "coarse",
    diameters: [10, 12],
    years: [1947, 1953],
    accession: 4,
    base: ["aluminium", "glass"],
    count: 15,
  },
];

const given = [
  "Ada",
  "Bram",
  "Cora",
  "Dov",
  "Elsie",
  "Fenn",
  "Greta",
  "Hal",
  "Iona",
  "Jory",
  "Kit",
  "Lorna",
  "Milo",
  "Nell",
  "Otto",
  "Pia",
  "Quin",
  "Rhoda",
  "Sol",
  "Tamsin",
  "Ulla",
  "Vic",
  "Wynn",
  "Yara",
];
const family = [
  "Ashby",
  "Brack",
  "Carrow",
  "Dunmore",
  "Ellery",
  "Farrant",
  "Gilby",
  "Hesketh",
  "Ilsley",
  "Jessop",
  "Kettle",
  "Lanyon",
  "Marl",
  "Norcott",
  "Oakes",
  "Pennock",
  "Quarrie",
  "Rudd",
  "Selby",
  "Trewin",
];
const ensembles = [
  "Dance Orchestra",
  "Salon Trio",
  "Silver Band",
  "Quartet",
  "Concert Party",
  "Harmony Four",
  "String Ensemble",
  "Male Voice Choir",
];
const words = [
  "Lantern",
  "Harbour",
  "Meadow",
  "Winter",
  "River",
  "Evening",
  "Copper",
  "Blue",
  "Orchard",
  "Moonlit",
  "Willow",
  "Northern",
  "Candle",
  "Garden",
  "Hill",
  "Swallow",
  "Morning",
  "Valley",
  "Paper",
  "Shore",
];
const forms = [
  "Waltz",
  "Song",
  "Reel",
  "Serenade",
  "Lullaby",
  "Foxtrot",
  "March",
  "Air",
  "Ballad",
  "Polka",
  "Nocturne",
  "Hornpipe",
];
const flagsPool = [
  "wear",
  "scratches",
  "chips",
  "cracks",
  "warp",
  "delamination",
  "residue",
  "mould",
] as const;
const grades = ["excellent", "good", "good", "fair", "fair", "poor"] as const;

export async function seedCatalogue(
  db: Kysely<Database>,
  actorId: string | null,
  engineerId: string | null,
): Promise<{ discsAdded: number }> {
  const existing = await db
    .selectFrom("discs")
    .select(sql<number>`count(*)::int`.as("n"))
    .executeTakeFirstOrThrow();
  if (existing.n > 0) return { discsAdded: 0 };
  const rnd = seededRandom(1877);
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(rnd() * xs.length)];
  const person = () => `${pick(given)} ${pick(family)}`;
  let added = 0;
  await db.transaction().execute(async (trx) => {
    const accessionIds: string[] = [];
    for (const a of accessions) {
      const row = await trx
        .insertInto("accessions")
        .values({ identifier: a.identifier, source: a.source, received_on: a.receivedOn })
        .returning("id")
        .executeTakeFirstOrThrow();
      accessionIds.push(row.id);
      await appendEvent(trx, {
        actorId,
        kind: "accession.received",
        subjectType: "accession",
        subjectId: row.id,
        payload: { after: a },
      });
    }
    let shelf = 1;
    const discIds: string[] = [];
    for (const f of families) {
      for (let i = 0; i < f.count; i++) {
        const label = pick(f.labels);
        const year = f.years[0] + Math.floor(rnd() * (f.years[1] - f.years[0] + 1));
        const isLacquer = f.format === "instantaneous_lacquer" || f.format === "transcription";
        const flags = [
          ...new Set(
            Array.from({ length: Math.floor(rnd() * 3) }, () =>
              pick(isLacquer ? flagsPool : flagsPool.slice(0, 5)),
            ),
          ),
        ];
        const prefix = label.replace(/[^A-Z]/g, "").slice(0, 2) || "X";
        const catNo =
          label === "Home recording" || label === "Saltmarsh field unit"
            ? ""
            : `${prefix} ${1000 + Math.floor(rnd() * 8999)}`;
        const disc = await trx
          .insertInto("discs")
          .values({
            accession_id: accessionIds[f.accession],
            shelf_mark: `MH-D${String(shelf++).padStart(5, "0")}`,
            label_name: label,
            catalogue_number: catNo,
            format: f.format,
            base: isLacquer ? pick(f.base ?? ["unknown"]) : null,
            diameter_in: pick(f.diameters),
            nominal_speed_rpm: f.speed,
            groove: f.groove,
            cut: f.format === "transcription" && rnd() < 0.25 ? "vertical" : "lateral",
            recorded_from_year: rnd() < 0.7 ? year : year - 1,
            recorded_to_year: year,
            condition_grade: pick(grades),
            condition_flags: flags,
            condition_notes: flags.includes("delamination")
              ? "Lacquer lifting at the edge; handle by the label area only."
              : flags.includes("cracks")
                ? "Hairline crack from the edge, not through the grooves."
                : "",
            handling_notes: isLacquer ? "Gloves. Do not clean with alcohol-based fluids." : "",
          })
          .returning(["id", "shelf_mark"])
          .executeTakeFirstOrThrow();
        const sideNames = f.format === "instantaneous_lacquer" && rnd() < 0.4 ? ["A"] : ["A", "B"];
        for (const designation of sideNames) {
          const performers =
            rnd() < 0.5 ? `${person()} and the ${pick(family)} ${pick(ensembles)}` : person();
          await trx
            .insertInto("sides")
            .values({
              disc_id: disc.id,
              designation,
              matrix_number: catNo ? `${prefix[0]}${10000 + Math.floor(rnd() * 89999)}` : "",
              take: catNo ? String(1 + Math.floor(rnd() * 4)) : "",
              title:
                f.format === "transcription"
                  ? `${pick(words)} ${pick(["Hour", "Magazine", "Programme", "Bulletin"])}, part ${designation === "A" ? 1 : 2}`
                  : `${pick(words)} ${pick(words)} ${pick(forms)}`,
              performers,
            })
            .execute();
        }
        discIds.push(disc.id);
        added++;
      }
    }
    await refreshSearch(trx, discIds);
    // One event per disc, as the archivist's catalogue entry.
    const discs = await trx
      .selectFrom("discs")
      .select(["id", "shelf_mark", "label_name", "catalogue_number", "format"])
      .orderBy("shelf_mark")
      .execute();
    await appendEvents(
      trx,
      discs.map((d) => ({
        actorId,
        kind: "disc.created",
        subjectType: "disc",
        subjectId: d.id,
        discId: d.id,
        payload: {
          after: {
            shelfMark: d.shelf_mark,
            labelName: d.label_name,
            catalogueNumber: d.catalogue_number,
            format: d.format,
          },
          origin: "demo seed",
        },
      })),
    );
    // Some work already handed to the demo engineer.
    // Some work already handed to the demo engineer, through the side lifecycle like any assignment.
    if (engineerId && actorId) {
      const actor = await trx
        .selectFrom("users")
        .select(["id", "role"])
        .where("id", "=", actorId)
        .executeTakeFirstOrThrow();
      const engineer = await trx
        .selectFrom("users")
        .select(["id", "name"])
        .where("id", "=", engineerId)
        .executeTakeFirstOrThrow();
      const wanted = await trx
        .selectFrom("sides as s")
        .innerJoin("discs as d", "d.id", "s.disc_id")
        .select("s.id")
        .where("d.shelf_mark", "<=", "MH-D00012")
        .execute();
      const events: NewEvent[] = [];
      for (const side of await lockSides(
        trx,
        wanted.map((w) => w.id),
      ))
        await assignSide(trx, actor, side, engineer, events);
      await appendEvents(trx, events);
    }
  });
  return { discsAdded: added };
}
