// The disc page's timeline and the audit log read events through one sentence builder:
// each sentence names the side, the file or curve involved and the outcome.
import { describe, expect, it } from "vitest";
import { describeEvent, eventContext, type EventLike, kindLabel } from "@/components/audit/event-sentence";

const sha = (c: string) => c.repeat(64);
const ev = (
  kind: string,
  payload: Record<string, unknown>,
  actorName: string | null = "Edda Marsh",
): EventLike => ({ kind, payload, actorName });

const events: EventLike[] = [
  ev("side.transfer_accepted", {
    side: "A",
    transferId: "t1",
    objectKey: "transfers/s/u/a.wav",
    sha256: sha("a"),
    bytes: 4096,
    technical: { container: "WAVE", encoding: "pcm", bitsPerSample: 24, sampleRateHz: 96000, channels: 2 },
  }),
  ev("side.transfer_accepted", {
    side: "A",
    transferId: "t2",
    objectKey: "transfers/s/u/b.wav",
    sha256: sha("b"),
    bytes: 4096,
  }),
  ev("side.curve_chosen", {
    side: "A",
    choiceId: "c1",
    preset: { name: "Turnover 500 Hz · no rolloff · shelf 50 Hz", version: 1, values: {} },
    overrides: { rolloff: { unit: "db10k", value: 10 } },
    cutSpeedRpm: 78,
    transferSpeedRpm: 78,
    rationale: "By ear.",
    evidenceKind: "listening",
  }),
  ev("side.render_requested", {
    side: "A",
    renderId: "r1",
    transferId: "t2",
    curveChoiceId: "c1",
    channelMode: "both",
    bitDepth: 24,
    sampleRateHz: 48000,
  }),
  ev(
    "side.rendered",
    {
      side: "A",
      renderId: "r1",
      transfer: { id: "t2", sha256: sha("b") },
      curveChoiceId: "c1",
      accessCopy: {
        objectKey: "access/s/r1.wav",
        sha256: sha("c"),
        bytes: 2048,
        sampleRateHz: 48000,
        bitDepth: 24,
      },
      filter: { kind: "fir", taps: 8192 },
    },
    "Edda Marsh",
  ),
];
const ctx = eventContext(events);
const read = (e: EventLike) => describeEvent(e, ctx);
const curveName = "Turnover 500 Hz · no rolloff · shelf 50 Hz v1 + rolloff 10 dB attenuation at 10 kHz";

describe("event sentences", () => {
  it("name the uploaded file and the start of its SHA-256", () => {
    expect(read(events[1]).sentence).toBe(
      "Edda Marsh uploaded the flat transfer b.wav of side A (SHA-256 bbbbbbbb…); its size, checksum and header were checked and it was accepted.",
    );
  });

  it("name a curve choice with what was changed for the side", () => {
    expect(read(events[2]).sentence).toBe(`Edda Marsh chose the curve for side A: ${curveName}.`);
  });

  it("name the render's source file, curve, rate and checksum", () => {
    expect(read(events[3]).sentence).toBe(
      `Edda Marsh asked for an access copy of side A through ${curveName}, at 48 kHz, 24-bit.`,
    );
    expect(read(events[4]).sentence).toBe(
      `The worker rendered the access copy of side A for Edda Marsh from b.wav through ${curveName}, at 48 kHz, 24-bit (SHA-256 cccccccc…).`,
    );
  });

  it("tell four fixity checks apart by file, side and outcome", () => {
    const checks = [
      ev(
        "side.fixity_checked",
        {
          side: "A",
          object: { kind: "transfer", id: "t2", key: "transfers/s/u/b.wav" },
          expectedSha256: sha("b"),
          outcome: "pass",
        },
        null,
      ),
      ev(
        "side.fixity_checked",
        {
          side: "A",
          object: { kind: "render", id: "r1", key: "access/s/r1.wav" },
          expectedSha256: sha("c"),
          outcome: "pass",
        },
        null,
      ),
      ev(
        "side.fixity_checked",
        {
          side: "B",
          object: { kind: "transfer", id: "t9", key: "transfers/s/u/b-side.wav" },
          expectedSha256: sha("d"),
          actualSha256: sha("e"),
          outcome: "mismatch",
        },
        null,
      ),
      ev(
        "side.fixity_checked",
        {
          side: "B",
          object: { kind: "render", id: "r9", key: "access/s/r9.wav" },
          expectedSha256: sha("f"),
          outcome: "missing",
        },
        null,
      ),
    ].map(read);
    expect(checks.map((c) => c.sentence)).toEqual([
      "A fixity check of the flat transfer b.wav of side A (SHA-256 bbbbbbbb…) passed.",
      "A fixity check of the access copy of side A (SHA-256 cccccccc…) passed.",
      "A fixity check of the flat transfer b-side.wav of side B (SHA-256 dddddddd…) found a checksum MISMATCH.",
      "A fixity check of the access copy of side B (SHA-256 ffffffff…) found the file MISSING.",
    ]);
    expect(checks.map((c) => c.tone)).toEqual(["good", "good", "bad", "bad"]);
  });

  it("name a label image's fixity check by what it shows, not by the name the server gave its object", () => {
    const key = "labels/d1/l1/original.png";
    const side = read(
      ev(
        "side.fixity_checked",
        {
          side: "A",
          object: { kind: "label_image", id: "l1", key },
          expectedSha256: sha("a"),
          outcome: "pass",
        },
        null,
      ),
    );
    const sleeve = read(
      ev(
        "disc.fixity_checked",
        { object: { kind: "label_image", id: "l2", key }, expectedSha256: sha("b"), outcome: "missing" },
        null,
      ),
    );
    expect(side.sentence).toBe("A fixity check of the label image of side A (SHA-256 aaaaaaaa…) passed.");
    expect(sleeve.sentence).toBe(
      "A fixity check of the label image of the disc (SHA-256 bbbbbbbb…) found the file MISSING.",
    );
    expect(side.details).toContainEqual({ label: "Object", value: key, mono: true });
  });

  it("name what an approval accepted: the transfer, the curve and the access copy", () => {
    const r = read(
      ev("side.approved", { side: "A", transferId: "t2", curveChoiceId: "c1", renderId: "r1" }, "Ines Varga"),
    );
    expect(r.sentence).toBe(
      "Ines Varga approved side A: its flat transfer, curve and access copy are accepted together.",
    );
    expect(r.tone).toBe("good");
    expect(r.details).toEqual([
      { label: "Flat transfer", value: `b.wav · SHA-256 ${sha("b")}`, mono: false },
      { label: "Curve", value: curveName },
      { label: "Access copy", value: `SHA-256 ${sha("c")} · 48 kHz, 24-bit`, mono: true },
    ]);
  });

  it("give a return's reason in the sentence", () => {
    const r = read(
      ev(
        "side.returned",
        {
          side: "A",
          reason: "Speed is off: 80 rpm, not 78.",
          transferId: "t2",
          curveChoiceId: "c1",
          renderId: "r1",
        },
        "Ines Varga",
      ),
    );
    expect(r.sentence).toBe("Ines Varga returned side A to the engineer: “Speed is off: 80 rpm, not 78.”");
    expect(
      read(ev("side.returned", { side: "A", reason: "Listen again at 2:10" }, "Ines Varga")).sentence,
    ).toBe("Ines Varga returned side A to the engineer: “Listen again at 2:10”.");
    expect(r.tone).toBe("bad");
  });

  it("say which access copy was superseded and why", () => {
    const r = read(
      ev(
        "side.render_superseded",
        { side: "A", renderId: "r1", reason: "a new flat transfer was accepted" },
        null,
      ),
    );
    expect(r.sentence).toBe(
      "The access copy of side A (SHA-256 cccccccc…) was superseded: a new flat transfer was accepted.",
    );
    expect(r.details.find((d) => d.label === "Curve")?.value).toBe(curveName);
  });

  it("give a status change's note, and read statuses it does not know yet", () => {
    const r = read(
      ev("side.status_changed", {
        side: "A",
        before: { status: "rendered" },
        after: { status: "needs_render" },
        note: "the curve changed: the access copy must be rendered again",
      }),
    );
    expect(r.sentence).toBe(
      "Edda Marsh moved side A from rendered to needs render: the curve changed: the access copy must be rendered again.",
    );
  });

  it("reads a kind it has no words for from its label and plain fields", () => {
    const r = read(
      ev("side.label_photographed", { side: "B", photoKey: "photos/x.jpg", note: "Both labels" }),
    );
    expect(r.sentence).toBe("Edda Marsh recorded: label photographed (side B).");
    expect(r.details).toEqual([
      { label: "Photo key", value: "photos/x.jpg", mono: true },
      { label: "Note", value: "Both labels", mono: false },
    ]);
    expect(kindLabel("side.render_superseded")).toBe("Access copy superseded");
  });
});
