"use client";
/** Saves a chain (one item of each kind, any number of others), or changes or retires one. */
import { useRouter } from "next/navigation";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { SelectField, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { chainOrder, equipmentKindLabels, type EquipmentKindName } from "@/lib/validation/equipment";
import { itemLabel } from "./format";
import { useSave } from "./use-save";

export interface PickableItem {
  id: string;
  kind: EquipmentKindName;
  make: string;
  model: string;
  serial: string;
  stylusTipUm: number | null;
  stylusShape: string | null;
  /** Out of service (today or before): offered only when the chain already holds it. */
  retired: boolean;
}

export function ChainForm({
  items,
  initial,
  onDone,
}: {
  items: PickableItem[];
  initial?: { id: string; version: number; name: string; notes: string; itemIds: string[]; retired: boolean };
  onDone?: () => void;
}) {
  const uid = useId();
  const router = useRouter();
  const editing = Boolean(initial);
  const [name, setName] = useState(initial?.name ?? "");
  const [notes, setNotes] = useState(initial?.notes ?? "");
  const [picked, setPicked] = useState<string[]>(initial?.itemIds ?? []);
  const { save, saving, error, field } = useSave<{ chain: { id: string } }>();
  const offered = items.filter((i) => !i.retired || picked.includes(i.id));
  const kindOf = (id: string) => items.find((i) => i.id === id)?.kind;
  const pickOne = (kind: EquipmentKindName, id: string) =>
    setPicked((cur) => [...cur.filter((x) => kindOf(x) !== kind), ...(id ? [id] : [])]);

  const submit = async (extra: { retired?: boolean } = {}) => {
    const body = {
      name,
      notes,
      itemIds: picked,
      ...(editing ? { version: initial!.version, ...extra } : {}),
    };
    const answer = editing
      ? await save(`/api/equipment/chains/${initial!.id}`, "PATCH", body)
      : await save("/api/equipment/chains", "POST", body);
    if (!answer) return;
    if (editing) onDone?.();
    else router.push(`/equipment/chains/${answer.chain.id}`);
  };

  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
      data-testid="chain-form"
    >
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          id={`${uid}-name`}
          label="Name"
          placeholder="e.g. Bench 2, coarse groove"
          value={name}
          onChange={(e) => setName(e.target.value)}
          errors={field("name")}
          data-testid="chain-name"
        />
        <TextField
          id={`${uid}-notes`}
          label="Notes"
          value={notes}
          onChange={(e) => setNotes(e.target.value)}
          errors={field("notes")}
        />
      </div>
      <fieldset className="grid gap-3 rounded-lg border border-paper-edge bg-paper/40 p-3 sm:grid-cols-2">
        <legend className="px-1 text-sm font-medium">From the disc to the file</legend>
        {chainOrder
          .filter((k) => k !== "other")
          .map((kind) => (
            <SelectField
              key={kind}
              id={`${uid}-${kind}`}
              label={equipmentKindLabels[kind]}
              value={picked.find((id) => kindOf(id) === kind) ?? ""}
              onChange={(e) => pickOne(kind, e.target.value)}
              data-testid={`chain-pick-${kind}`}
            >
              <option value="">— none —</option>
              {offered
                .filter((i) => i.kind === kind)
                .map((i) => (
                  <option key={i.id} value={i.id}>
                    {itemLabel(i)}
                  </option>
                ))}
            </SelectField>
          ))}
        {offered.some((i) => i.kind === "other") ? (
          <div className="sm:col-span-2">
            <p className="mb-1 text-sm font-medium">Other items</p>
            <div className="flex flex-wrap gap-4 text-sm">
              {offered
                .filter((i) => i.kind === "other")
                .map((i) => (
                  <label key={i.id} className="inline-flex items-center gap-2">
                    <input
                      type="checkbox"
                      checked={picked.includes(i.id)}
                      onChange={(e) =>
                        setPicked((cur) =>
                          e.target.checked ? [...cur, i.id] : cur.filter((x) => x !== i.id),
                        )
                      }
                      className="h-4 w-4 accent-[#2f6f6a]"
                    />
                    {itemLabel(i)}
                  </label>
                ))}
            </div>
          </div>
        ) : null}
        {field("itemIds") ? (
          <p className="text-xs font-medium text-alarm sm:col-span-2">{field("itemIds").join(" ")}</p>
        ) : null}
      </fieldset>
      {error ? (
        <Notice tone="error" title="Not saved" testId="chain-error">
          {error}
        </Notice>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={saving} data-testid="chain-save">
          Save the chain
        </Button>
        {editing ? (
          <Button
            type="button"
            variant={initial!.retired ? "secondary" : "danger"}
            disabled={saving}
            onClick={() => void submit({ retired: !initial!.retired })}
          >
            {initial!.retired ? "Bring it back into use" : "Retire the chain"}
          </Button>
        ) : null}
        {editing && onDone ? (
          <Button type="button" variant="quiet" onClick={onDone}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
