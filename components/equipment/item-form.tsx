"use client";
/** Registers an item, or corrects one (never its kind). A stylus takes its tip in mil or µm; the register keeps µm. */
import { useRouter } from "next/navigation";
import { useId, useState } from "react";
import { isoDateInputProps } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { SelectField, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { equipmentKindLabels, equipmentKinds, type EquipmentKindName } from "@/lib/validation/equipment";
import { useSave } from "./use-save";

export interface ItemFormValues {
  id?: string;
  version?: number;
  kind: EquipmentKindName;
  make: string;
  model: string;
  serial: string;
  inServiceOn: string | null;
  outOfServiceOn: string | null;
  stylusTipUm: number | null;
  stylusShape: string | null;
  notes: string;
}

const blank: ItemFormValues = {
  kind: "stylus",
  make: "",
  model: "",
  serial: "",
  inServiceOn: null,
  outOfServiceOn: null,
  stylusTipUm: null,
  stylusShape: null,
  notes: "",
};

export function ItemForm({ initial, onDone }: { initial?: ItemFormValues; onDone?: () => void }) {
  const uid = useId();
  const router = useRouter();
  const editing = Boolean(initial?.id);
  const start = initial ?? blank;
  const [kind, setKind] = useState<EquipmentKindName>(start.kind);
  const [make, setMake] = useState(start.make);
  const [model, setModel] = useState(start.model);
  const [serial, setSerial] = useState(start.serial);
  const [inService, setInService] = useState(start.inServiceOn ?? "");
  const [outOfService, setOutOfService] = useState(start.outOfServiceOn ?? "");
  const [tip, setTip] = useState(start.stylusTipUm === null ? "" : String(start.stylusTipUm));
  const [tipUnit, setTipUnit] = useState<"mil" | "um">(start.stylusTipUm === null ? "mil" : "um");
  const [shape, setShape] = useState(start.stylusShape ?? "");
  const [notes, setNotes] = useState(start.notes);
  const { save, saving, error, field } = useSave<{ item: { id: string } }>();

  const submit = async () => {
    const body = {
      ...(editing ? { version: start.version } : { kind }),
      make,
      model,
      serial,
      inServiceOn: inService,
      outOfServiceOn: outOfService,
      stylusTip: kind === "stylus" && tip.trim() ? { value: tip, unit: tipUnit } : null,
      stylusShape: kind === "stylus" ? shape : "",
      notes,
    };
    const answer = editing
      ? await save(`/api/equipment/items/${start.id}`, "PATCH", body)
      : await save("/api/equipment/items", "POST", body);
    if (!answer) return;
    if (editing) onDone?.();
    else router.push(`/equipment/items/${answer.item.id}`);
  };

  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
      data-testid="item-form"
    >
      <div className="grid gap-3 sm:grid-cols-3">
        <SelectField
          id={`${uid}-kind`}
          label="Kind"
          value={kind}
          disabled={editing}
          onChange={(e) => setKind(e.target.value as EquipmentKindName)}
          errors={field("kind")}
          data-testid="item-kind"
        >
          {equipmentKinds.map((k) => (
            <option key={k} value={k}>
              {equipmentKindLabels[k]}
            </option>
          ))}
        </SelectField>
        <TextField
          id={`${uid}-make`}
          label="Make"
          value={make}
          onChange={(e) => setMake(e.target.value)}
          errors={field("make")}
          data-testid="item-make"
        />
        <TextField
          id={`${uid}-model`}
          label="Model"
          value={model}
          onChange={(e) => setModel(e.target.value)}
          errors={field("model")}
          data-testid="item-model"
        />
        <TextField
          id={`${uid}-serial`}
          label="Serial number"
          value={serial}
          onChange={(e) => setSerial(e.target.value)}
          errors={field("serial")}
          data-testid="item-serial"
        />
        <TextField
          id={`${uid}-in`}
          label="In service from"
          {...isoDateInputProps}
          value={inService}
          onChange={(e) => setInService(e.target.value)}
          errors={field("inServiceOn")}
          data-testid="item-in-service"
        />
        <TextField
          id={`${uid}-out`}
          label="Out of service from"
          {...isoDateInputProps}
          placeholder="still in service"
          value={outOfService}
          onChange={(e) => setOutOfService(e.target.value)}
          errors={field("outOfServiceOn")}
          data-testid="item-out-of-service"
        />
      </div>
      {kind === "stylus" ? (
        <fieldset className="grid gap-3 rounded-lg border border-paper-edge bg-paper/40 p-3 sm:grid-cols-3">
          <legend className="px-1 text-sm font-medium">The tip</legend>
          <TextField
            id={`${uid}-tip`}
            label="Tip size"
            inputMode="decimal"
            placeholder="e.g. 3.0"
            value={tip}
            onChange={(e) => setTip(e.target.value)}
            errors={field("stylusTip")}
            data-testid="item-tip"
          />
          <SelectField
            id={`${uid}-tip-unit`}
            label="In"
            value={tipUnit}
            onChange={(e) => setTipUnit(e.target.value as "mil" | "um")}
            data-testid="item-tip-unit"
          >
            <option value="mil">mil (thousandths of an inch)</option>
            <option value="um">µm</option>
          </SelectField>
          <TextField
            id={`${uid}-shape`}
            label="Shape"
            placeholder="e.g. truncated elliptical"
            value={shape}
            onChange={(e) => setShape(e.target.value)}
            errors={field("stylusShape")}
            data-testid="item-shape"
          />
        </fieldset>
      ) : null}
      <div className="space-y-1.5">
        <label htmlFor={`${uid}-notes`} className="block text-sm font-medium">
          Notes
        </label>
        <textarea
          id={`${uid}-notes`}
          rows={2}
          value={notes}
          onChange={(e) => setNotes(e.target.value)}
          className="block w-full rounded-md border border-paper-edge bg-white px-3 py-2 text-sm"
        />
      </div>
      {error ? (
        <Notice tone="error" title="Not saved" testId="item-error">
          {error}
        </Notice>
      ) : null}
      <div className="flex gap-2">
        <Button type="submit" disabled={saving} data-testid="item-save">
          {editing ? "Save the correction" : "Register the item"}
        </Button>
        {editing && onDone ? (
          <Button type="button" variant="quiet" onClick={onDone}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
