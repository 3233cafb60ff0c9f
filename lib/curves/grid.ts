/** Frequency grids shared by the designers, the measurements and the plots. */

export function logGrid(lowHz: number, highHz: number, count: number): Float64Array {
  const out = new Float64Array(count);
  const a = Math.log(lowHz);
  const b = Math.log(highHz);
  for (let i = 0; i < count; i++) out[i] = Math.exp(a + ((b - a) * i) / (count - 1));
  return out;
}

export function linearGrid(lowHz: number, highHz: number, count: number): Float64Array {
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) out[i] = lowHz + ((highHz - lowHz) * i) / (count - 1);
  return out;
}

/** Sorted union of grids. */
export function mergeGrids(...grids: ArrayLike<number>[]): Float64Array {
  const all: number[] = [];
  for (const g of grids) for (let i = 0; i < g.length; i++) all.push(g[i]);
  all.sort((x, y) => x - y);
  return Float64Array.from(all);
}

/** Wrap an angle difference in degrees to (−180, 180]. */
export function wrapDeg(deg: number): number {
  let d = deg % 360;
  if (d > 180) d -= 360;
  if (d <= -180) d += 360;
  return d;
}
