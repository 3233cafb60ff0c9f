import pkg from "../package.json";

/** "Rillbook 0.1.0": recorded in coding histories and render events. */
export function softwareName(): string {
  return `Rillbook ${pkg.version}`;
}
