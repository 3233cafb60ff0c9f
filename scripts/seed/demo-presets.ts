import { BS1928_COARSE_SPEC, type CurveSpec, IEC_HIGHPASS_SPEC, RIAA_SPEC } from "../../lib/curves";

export interface SeedPreset {
  name: string;
  spec: CurveSpec;
  notes: string;
}

/**
 * The preset library a new lab starts with: published standards, each with its source,
 * and a grid of generic historic settings named only by their values. No label or
 * company names: the lab names its own presets.
 */
export function seedPresets(): SeedPreset[] {
  const standards: SeedPreset[] = [
    {
      name: "RIAA / IEC 60098 (3180/318/75 µs)",
      spec: RIAA_SPEC,
      notes:
        "Source: IEC 60098, Analogue audio disk records and reproducing equipment (the " +
        "RIAA characteristic): time constants 3180 µs, 318 µs and 75 µs. The standard playback " +
        "curve for microgroove discs from the mid-1950s on.",
    },
    {
      name: "IEC 60098 with 7950 µs high-pass",
      spec: IEC_HIGHPASS_SPEC,
      notes:
        "Source: IEC 60098 amendment (1976) adding a 7950 µs time constant, a rumble high-pass with its corner near 20 Hz, to the RIAA characteristic.",
    },
    {
      name: "BS 1928:1955 coarse groove (3180/450/50 µs)",
      spec: BS1928_COARSE_SPEC,
      notes:
        "Source: British Standard BS 1928:1955, recording characteristic for coarse-groove (78 rpm) discs: time constants 3180 µs, 450 µs and 50 µs.",
    },
  ];

  const grid: SeedPreset[] = [];
  const turnoversHz = [250, 300, 400, 500, 800];
  const rolloffsDb = [0, 5, 10, 13.7, 16];
  for (const turnoverHz of turnoversHz) {
    for (const rolloffDb of rolloffsDb) {
      for (const shelf of [true, false]) {
        const rolloffText = rolloffDb === 0 ? "no rolloff" : `rolloff ${rolloffDb} dB`;
        grid.push({
          name: `Turnover ${turnoverHz} Hz · ${rolloffText} · ${shelf ? "shelf 50 Hz" : "no shelf, 20 Hz high-pass"}`,
          spec: {
            turnover: { unit: "hz", value: turnoverHz },
            shelf: shelf ? { unit: "hz", value: 50 } : null,
            rolloff: rolloffDb === 0 ? null : { unit: "db10k", value: rolloffDb },
            // Without a shelf the bass gain would grow without bound: a 7950 µs high-pass bounds it.
            highpass: shelf ? null : { unit: "us", value: 7950 },
            reference: { hz: 1000, db: 0 },
            speedRatio: 1,
          },
          notes:
            `Generic setting named by its values: bass turnover ${turnoverHz} Hz, treble attenuation ` +
            `${rolloffDb} dB at 10 kHz, ${shelf ? "bass shelf at 50 Hz" : "no bass shelf (bounded by a 20 Hz rumble high-pass)"}. ` +
            `Not tied to any label or era: choose it on evidence and say why.`,
        });
      }
    }
  }
  return [...standards, ...grid];
}
