"use client";
import { CalibrationForm } from "./calibration-form";
import { ChainForm, type PickableItem } from "./chain-form";
import { Reveal } from "./reveal";

export function ChainEditor(props: {
  items: PickableItem[];
  initial: { id: string; version: number; name: string; notes: string; itemIds: string[]; retired: boolean };
}) {
  return (
    <Reveal label="Change or retire this chain" testId="edit-chain">
      {(close) => <ChainForm {...props} onDone={close} />}
    </Reveal>
  );
}

export function CalibrationRecorder({ chainId }: { chainId: string }) {
  return (
    <Reveal label="Record a calibration" testId="record-calibration">
      {(close) => <CalibrationForm chainId={chainId} onDone={close} />}
    </Reveal>
  );
}
