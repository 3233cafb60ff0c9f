"use client";
import { type ReactNode, useState } from "react";
import { Button } from "@/components/ui/button";

/** A form kept behind one button until it is wanted. */
export function Reveal({
  label,
  children,
  testId,
}: {
  label: string;
  children: (close: () => void) => ReactNode;
  testId?: string;
}) {
  const [open, setOpen] = useState(false);
  if (!open)
    return (
      <Button type="button" variant="secondary" size="sm" onClick={() => setOpen(true)} data-testid={testId}>
        {label}
      </Button>
    );
  return <div className="w-full">{children(() => setOpen(false))}</div>;
}
