"use client";
/**
 * The upload's chain from the register, and the one item (usually the stylus) swapped in
 * for this transfer. What the transfer was made with is kept with it, item by item.
 */
import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { useId } from "react";
import { SelectField } from "@/components/ui/field";
import { fetchJson } from "@/lib/http/client";
import { equipmentKindLabels, type EquipmentKindName } from "@/lib/validation/equipment";
import { ageText, itemLabel } from "./format";

interface ChainItem {
  id: string;
  kind: EquipmentKindName;
  make: string;
  model: string;
  serial: string;
  stylusTipUm: number | null;
  stylusShape: string | null;
}
interface ChainsJson {
  chains: {
    id: string;
    name: string;
    items: ChainItem[];
    latestCalibration: { calibratedOn: string; testDisc: string } | null;
  }[];
}
interface ItemsJson {
  items: (ChainItem & { outOfServiceOn: string | null; inServiceOn: string | null })[];
}

export function ChainPicker({
  chainId,
  swapItemId,
  onChange,
  disabled,
  errors,
}: {
  chainId: string;
  swapItemId: string;
  onChange: (v: { chainId: string; swapItemId: string }) => void;
  disabled?: boolean;
  errors?: { chainId?: string[]; swapItemId?: string[] };
}) {
  const uid = useId();
  const chains = useQuery({
    queryKey: ["equipment-chains"],
    queryFn: () => fetchJson<ChainsJson>("/api/equipment/chains"),
  });
  const items = useQuery({
    queryKey: ["equipment-items"],
    queryFn: () => fetchJson<ItemsJson>("/api/equipment/items"),
    enabled: Boolean(chainId),
  });
  const chain = chains.data?.chains.find((c) => c.id === chainId);
  const today = new Date().toISOString().slice(0, 10);
  const swappable =
    items.data?.items.filter(
      (i) =>
        !chain?.items.some((c) => c.id === i.id) &&
        (!i.inServiceOn || i.inServiceOn <= today) &&
        (!i.outOfServiceOn || i.outOfServiceOn >= today),
    ) ?? [];
  const swap = swappable.find((i) => i.id === swapItemId);
  const age = chain?.latestCalibration
    ? Math.round((Date.parse(today) - Date.parse(chain.latestCalibration.calibratedOn)) / 86_400_000)
    : null;
  return (
    <div className="space-y-2 rounded-lg border border-paper-edge bg-paper/40 p-3" data-testid="chain-picker">
      <div className="grid gap-3 @xl:grid-cols-2">
        <SelectField
          id={`${uid}-chain`}
          label="Chain from the register"
          value={chainId}
          disabled={disabled}
          onChange={(e) => onChange({ chainId: e.target.value, swapItemId: "" })}
          errors={errors?.chainId}
          data-testid="upload-chain-id"
        >
          <option value="">{chains.isLoading ? "Loading…" : "— not from the register —"}</option>
          {chains.data?.chains.map((c) => (
            <option key={c.id} value={c.id}>
              {c.name}
            </option>
          ))}
        </SelectField>
        <SelectField
          id={`${uid}-swap`}
          label="Swap one item for this transfer"
          value={swapItemId}
          disabled={disabled || !chain}
          onChange={(e) => onChange({ chainId, swapItemId: e.target.value })}
          errors={errors?.swapItemId}
          data-testid="upload-swap"
        >
          <option value="">— the chain as it is —</option>
          {swappable.map((i) => (
            <option key={i.id} value={i.id}>
              {equipmentKindLabels[i.kind]}: {itemLabel(i)}
            </option>
          ))}
        </SelectField>
      </div>
      {chain ? (
        <div className="text-xs text-ink-soft" data-testid="upload-chain-items">
          <ol className="flex flex-wrap gap-x-3 gap-y-0.5">
            {chain.items.map((i) => {
              const replaced = swap && swap.kind !== "other" && swap.kind === i.kind;
              return (
                <li key={i.id} className={replaced ? "line-through opacity-60" : undefined}>
                  <span className="uppercase tracking-wide text-ink-faint">
                    {equipmentKindLabels[i.kind]}
                  </span>{" "}
                  {itemLabel(i)}
                </li>
              );
            })}
            {swap ? (
              <li className="font-medium text-shellac-deep">
                <span className="uppercase tracking-wide">{equipmentKindLabels[swap.kind]}</span>{" "}
                {itemLabel(swap)} (swapped in)
              </li>
            ) : null}
          </ol>
          <p className="mt-1">
            {chain.latestCalibration && age !== null
              ? `Calibrated ${chain.latestCalibration.calibratedOn} (${ageText(age)} ago) with ${chain.latestCalibration.testDisc}.`
              : "This chain has no calibration yet."}{" "}
            <Link href={`/equipment/chains/${chain.id}`} className="underline" target="_blank">
              Open the chain
            </Link>
          </p>
        </div>
      ) : (
        <p className="text-xs text-ink-faint">
          With a chain, the access copy&apos;s coding history names the turntable, cartridge, stylus and
          converter, and a recall finds this transfer.
        </p>
      )}
    </div>
  );
}
