/**
 * The bench's pitch reference: the engineer names a reference (A = 440 Hz) and a window of the
 * side's flat transfer; the server finds the peak near it and proposes the cut speed.
 */
import { WaveFile } from "wavefile";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { api } from "../support/app";
import { testDb } from "../support/db";
import { assignedDisc, labCookies, type LabCookies, uploadTransfer } from "../support/pipeline";

const tag = Date.now().toString(36);
let c: LabCookies;
let sideIds: string[];

/** 6 s at 44.1 kHz, 24-bit stereo: silence for 1 s, then an A of 440 Hz as a disc cut at 80 rpm plays at 78 (429 Hz). */
function tuningNoteTransfer(): Uint8Array {
  const fs = 44_100;
  const frames = 6 * fs;
  const full = 2 ** 23 - 1;
  const note = Array.from({ length: frames }, (_, t) =>
    t < fs ? 0 : Math.round(0.4 * full * Math.sin((2 * Math.PI * ((440 * 78) / 80) * t) / fs)),
  );
  const wav = new WaveFile();
  wav.fromScratch(2, fs, "24", [note, note]);
  return wav.toBuffer();
}

beforeAll(async () => {
  c = await labCookies();
  ({ sideIds } = await assignedDisc(c, `PR-${tag}`, ["A", "B"]));
  const { done } = await uploadTransfer(c, sideIds[0], tuningNoteTransfer(), "PR side A flat.wav");
  expect(done.status).toBe(201);
});

afterAll(async () => {
  await testDb.destroy();
});

const measure = (cookie: string, sideId: string, body: object) =>
  api(`/api/sides/${sideId}/pitch-reference`, { cookie, method: "POST", body });

describe("the pitch reference on the bench", () => {
  it("finds A = 440 Hz at 429 Hz in the window and proposes a cut speed of 80 rpm for a 78 rpm transfer", async () => {
    const r = await measure(c.engineer, sideIds[0], {
      referenceHz: 440,
      startSeconds: 1.5,
      lengthSeconds: 4,
      transferSpeedRpm: 78,
    });
    expect(r.status).toBe(200);
    // Source: 440 × 78/80 = 429 Hz found; 78 × 440/429 = 80 rpm.
    expect(Math.abs(r.body.peakHz - 429)).toBeLessThan(0.02);
    expect(r.body.proposedCutSpeedRpm).toBe(80);
    expect(r.body.confidence).toBe("clear");
    expect(r.body.prominenceDb).toBeGreaterThan(20);
    expect(r.body.window).toEqual({ startSeconds: 1.5, lengthSeconds: 4 });
  });

  it("refuses a window past the end of the transfer and one of silence, saying why", async () => {
    const late = await measure(c.engineer, sideIds[0], {
      referenceHz: 440,
      startSeconds: 4,
      lengthSeconds: 4,
      transferSpeedRpm: 78,
    });
    expect(late.status).toBe(422);
    expect(late.body.error.message).toMatch(/6\.00 s long/);
    const silent = await measure(c.engineer, sideIds[0], {
      referenceHz: 440,
      startSeconds: 0,
      lengthSeconds: 0.9,
      transferSpeedRpm: 78,
    });
    expect(silent.status).toBe(422);
    expect(silent.body.error.message).toMatch(/silent/);
  });

  it("answers 409 for a side with no transfer, and keeps a curator out", async () => {
    expect(
      (
        await measure(c.engineer, sideIds[1], {
          referenceHz: 50,
          startSeconds: 0,
          lengthSeconds: 2,
          transferSpeedRpm: 78,
        })
      ).status,
    ).toBe(409);
    expect(
      (
        await measure(c.curator, sideIds[0], {
          referenceHz: 440,
          startSeconds: 1,
          lengthSeconds: 2,
          transferSpeedRpm: 78,
        })
      ).status,
    ).toBe(403);
  });
});
