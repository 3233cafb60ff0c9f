"use client";
/** Under a transfer: the register's items it was made with, and its chain's latest calibration before it and how old it was. */
import Link from "next/link";
import type { TransferEquipmentJson } from "@/components/bench/types";
import { Badge } from "@/components/ui/badge";
import { itemText } from "@/lib/equipment/describe";
import { equipmentKindLabels } from "@/lib/validation/equipment";
import { ageText } from "./format";

export function TransferEquipment({ equipment }: { equipment: TransferEquipmentJson }) {
  const k = equipment.calibration;
  return (
    <div className="mt-2 rounded-md bg-paper-deep/40 px-3 py-2 text-xs" data-testid="transfer-equipment">
      <p className="mb-1 font-medium text-ink-soft">
        Made with{" "}
        {equipment.chain ? (
          <Link
            href={`/equipment/chains/${equipment.chain.id}`}
            className="text-shellac-deep hover:underline"
          >
            {equipment.chain.name}
          </Link>
        ) : (
          "these items"
        )}
      </p>
      <ul className="grid gap-x-4 gap-y-0.5 sm:grid-cols-2">
        {equipment.items.map((i) => (
          <li key={i.itemId}>
            <span className="uppercase tracking-wide text-ink-faint">{equipmentKindLabels[i.kind]}</span>{" "}
            <Link href={`/equipment/items/${i.itemId}`} className="hover:underline">
              {itemText(i)}
            </Link>
            {i.swapped ? <span className="ml-1 text-shellac-deep">(swapped in)</span> : null}
          </li>
        ))}
      </ul>
      <p className="mt-1.5 flex flex-wrap items-center gap-2" data-testid="transfer-calibration">
        {k ? (
          <>
            <Badge tone={k.ageDays > 180 ? "accent" : "ok"}>
              calibrated {k.calibratedOn}, {ageText(k.ageDays)} before
            </Badge>
            <span className="text-ink-soft">
              {k.testDisc} · {k.deviationRmsDb.toFixed(2)} dB RMS from the expected curve
              {k.itemsDiffer ? " · measured with other items than this transfer used" : ""}
            </span>
          </>
        ) : equipment.chain ? (
          <Badge tone="accent">the chain had no calibration before this transfer</Badge>
        ) : null}
      </p>
    </div>
  );
}
