/**
 * Rillbook curve maths: pure TypeScript, no framework, database or node-only
 * imports, so the browser, the server, the worker and the CLI share it.
 */
export * from "./types";
export * from "./units";
export {
  mergeCurve,
  speedCorrectedSpec,
  resolveCurve,
  validateSampleRate,
  DEFAULT_REFERENCE,
  MIN_SAMPLE_RATE_HZ,
  MAX_SAMPLE_RATE_HZ,
  MIN_REFERENCE_HZ,
  MAX_REFERENCE_HZ,
} from "./spec";
export {
  analogModel,
  buildAnalogModel,
  analogResponse,
  analogGainDb,
  analogPhaseRad,
  analogComplexInto,
  peakGain,
} from "./analog";
export type { AnalogModel, AnalogResponse } from "./analog";
export { asymptotes } from "./asymptotes";
export type { Asymptotes, AsymptoteCorner, AsymptoteSegment } from "./asymptotes";
export { sosComplexAt, sosResponse, sosFilter } from "./sos";
export type { SosRow, SosResponse } from "./sos";
export { designIir, designIirFromModel, measureSosError } from "./iir";
export type { IirDesign } from "./iir";
export {
  designRenderFilter,
  designRenderFilterFromModel,
  firDeviation,
  measureFir,
  RENDER_TARGET_DB,
  RENDER_TARGET_DEG,
} from "./render-filter";
export type { RenderFilter, RenderFilterOptions } from "./render-filter";
export { fitCurve, FIT_PARAMETERS } from "./fit";
export type { FitParameter, FitRequest, FitResult, FitResidual, FittedCorner } from "./fit";
export { parsePointsCsv, PointsParseError } from "./points-csv";
export { atCutSpeed, fitMeasuredPoints, fitPoints, measuredPlaybackPoints } from "./measurement";
export type { MeasurementFit, MeasurementJson } from "./measurement";
export { logGrid, linearGrid } from "./grid";
export { RIAA_SPEC, IEC_HIGHPASS_SPEC, BS1928_COARSE_SPEC } from "./standard-curves";
export { describeCurve } from "./describe";
export type { CurveDescription } from "./describe";
export {
  formatNumber,
  formatRolloffDb,
  normalizeRolloffDb,
  parseRolloffDb,
  formatCorner,
  cornerChanges,
  curveChoiceName,
  CORNER_WORDS,
} from "./names";
export type { CurveChoiceNaming } from "./names";
export { filterDeviations, DEVIATION_LOW_HZ, DEVIATION_HIGH_HZ } from "./filter-deviation";
export type { FilterDeviations, DeviationTrace } from "./filter-deviation";
