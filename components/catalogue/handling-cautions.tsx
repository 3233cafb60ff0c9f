import { Notice } from "@/components/ui/notice";

/**
 * The handling cautions that follow from a disc's format, base and condition. They
 * remind; the institution's conservation and safety rules decide.
 */
export function handlingCautions(d: {
  format: string;
  base: string | null;
  conditionFlags: string[];
  conditionGrade: string;
}): string[] {
  const out: string[] = [];
  const flags = new Set(d.conditionFlags);
  const lacquer = d.format === "instantaneous_lacquer" || d.format === "transcription";
  if (d.format === "shellac_78") {
    out.push(
      "Shellac is brittle: support the disc with both hands and never flex it. A cracked or broken shellac disc has sharp edges.",
    );
  }
  if (lacquer) {
    out.push(
      "Lacquer coatings can delaminate and shed a white residue (palmitic acid). Wear gloves and handle the disc by its edge only.",
    );
  }
  if (d.base === "glass") {
    out.push(
      "This lacquer is on a glass base: it can shatter and cut. Carry it flat and supported, one disc at a time.",
    );
  }
  if (d.format === "vinyl_78" || d.format === "microgroove_lp") {
    out.push(
      "Vinyl draws static and dust: handle by the edge and label, and keep it sleeved when it is off the turntable.",
    );
  }
  if (flags.has("cracks") || flags.has("chips")) {
    out.push(
      "Logged as cracked or chipped: expect sharp edges, and ask conservation before playing it — the stylus can widen a crack.",
    );
  }
  if ((flags.has("delamination") || flags.has("residue")) && !lacquer) {
    out.push(
      "Logged with delamination or residue: wear gloves and do not play it until it has been assessed.",
    );
  } else if (flags.has("delamination") || flags.has("residue")) {
    out.push(
      "Delamination or residue has been logged on this disc: do not play it until conservation has assessed it.",
    );
  }
  if (flags.has("warp")) {
    out.push("Warped: do not try to flatten it yourself; conservation decides whether and how.");
  }
  if (flags.has("mould")) {
    out.push(
      "Mould has been logged: keep this disc isolated from the rest of the collection " +
        "and follow the conservation team's procedure before anyone handles or plays it.",
    );
  }
  if (d.conditionGrade === "unplayable") {
    out.push("Graded unplayable: do not put it on a turntable without conservation's approval.");
  }
  out.push(
    "Cleaning fluids can destroy some materials (lacquers; shellac with alcohol). Clean " +
      "only by the method the institution's conservation rules set for this material.",
  );
  return out;
}

export function HandlingCautions(props: {
  format: string;
  base: string | null;
  conditionFlags: string[];
  conditionGrade: string;
}) {
  const items = handlingCautions(props);
  return (
    <Notice tone="caution" title="Before you handle this disc" testId="handling-cautions">
      <ul className="list-disc space-y-1 pl-5">
        {items.map((t) => (
          <li key={t}>{t}</li>
        ))}
      </ul>
      <p className="mt-2 text-xs">
        These are reminders. Your institution&apos;s conservation and safety rules come first.
      </p>
    </Notice>
  );
}
