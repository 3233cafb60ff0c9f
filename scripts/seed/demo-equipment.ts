import type { Kysely } from "kysely";
import type { Database, EquipmentKind } from "../../db/types";
import { appendEvent } from "../../lib/provenance";

// The demo lab's bench: invented makes and models, two chains. Seeded once, when the
// register is empty; each item and chain is recorded in the provenance log as a person's
// registration would be.

interface SeedItem {
  key: string;
  kind: EquipmentKind;
  make: string;
  model: string;
  serial: string;
  inServiceOn: string;
  stylusTipUm?: number;
  stylusShape?: string;
  notes?: string;
}

const items: SeedItem[] = [
  {
    key: "tt",
    kind: "turntable",
    make: "Harrowgate",
    model: "TT-9 three-speed",
    serial: "HG-1182",
    inServiceOn: "2024-02-12",
  },
  {
    key: "arm",
    kind: "tonearm",
    make: "Harrowgate",
    model: "LA-12",
    serial: "A-0771",
    inServiceOn: "2024-02-12",
  },
  {
    key: "cart",
    kind: "cartridge",
    make: "Vellum Audio",
    model: "MC-3 mono/stereo",
    serial: "C-5521",
    inServiceOn: "2024-03-01",
  },
  {
    key: "st3",
    kind: "stylus",
    make: "Vellum Audio",
    model: "S-30",
    serial: "ST-301",
    inServiceOn: "2024-03-01",
    stylusTipUm: 76.2,
    stylusShape: "truncated elliptical",
    notes: "The usual tip for worn 78s.",
  },
  {
    key: "st25",
    kind: "stylus",
    make: "Vellum Audio",
    model: "S-25",
    serial: "ST-254",
    inServiceOn: "2024-03-01",
    stylusTipUm: 63.5,
    stylusShape: "conical",
  },
  {
    key: "st1",
    kind: "stylus",
    make: "Vellum Audio",
    model: "S-10",
    serial: "ST-107",
    inServiceOn: "2024-05-20",
    stylusTipUm: 25.4,
    stylusShape: "elliptical",
    notes: "Microgroove.",
  },
  {
    key: "pre",
    kind: "preamplifier",
    make: "Fenwick",
    model: "FP-1 flat",
    serial: "P-0009",
    inServiceOn: "2024-02-12",
  },
  {
    key: "adc",
    kind: "converter",
    make: "Larkspur",
    model: "AD-24",
    serial: "LX-0040",
    inServiceOn: "2024-02-12",
  },
];

const chains = [
  { name: "Bench 1, coarse groove", keys: ["tt", "arm", "cart", "st3", "pre", "adc"] },
  { name: "Bench 1, microgroove", keys: ["tt", "arm", "cart", "st1", "pre", "adc"] },
];

export async function seedEquipment(db: Kysely<Database>, actorId: string | null): Promise<number> {
  const any = await db.selectFrom("equipment_items").select("id").limit(1).executeTakeFirst();
  if (any) return 0;
  await db.transaction().execute(async (trx) => {
    const ids = new Map<string, { id: string; kind: EquipmentKind; name: string }>();
    for (const i of items) {
      const row = await trx
        .insertInto("equipment_items")
        .values({
          kind: i.kind,
          make: i.make,
          model: i.model,
          serial: i.serial,
          in_service_on: i.inServiceOn,
          out_of_service_on: null,
          stylus_tip_um: i.stylusTipUm ?? null,
          stylus_shape: i.stylusShape ?? null,
          notes: i.notes ?? "",
          created_by: actorId,
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      ids.set(i.key, { id: row.id, kind: i.kind, name: `${i.make} ${i.model}` });
      await appendEvent(trx, {
        actorId,
        kind: "equipment.item_registered",
        subjectType: "equipment",
        subjectId: row.id,
        payload: { item: `${i.make} ${i.model}`, after: { ...i, key: undefined } },
      });
    }
    for (const c of chains) {
      const chain = await trx
        .insertInto("equipment_chains")
        .values({ name: c.name, created_by: actorId })
        .returning("id")
        .executeTakeFirstOrThrow();
      const members = c.keys.map((k) => ids.get(k)!);
      await trx
        .insertInto("equipment_chain_items")
        .values(members.map((m) => ({ chain_id: chain.id, item_id: m.id, kind: m.kind })))
        .execute();
      await appendEvent(trx, {
        actorId,
        kind: "equipment.chain_saved",
        subjectType: "chain",
        subjectId: chain.id,
        payload: {
          name: c.name,
          notes: "",
          items: members.map((m) => ({ id: m.id, kind: m.kind, name: m.name })),
        },
      });
    }
  });
  return items.length;
}
