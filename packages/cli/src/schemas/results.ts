/**
 * zod schemas of the result documents the HTML report reads (`subgauge.camera/1`, `subgauge.sky/1`,
 * `subgauge.audit/1`). They check the `schema` tag and the fields the report uses, and let every other field
 * through (loose objects), so newer writers that add fields still validate. Numbers that JSON output turns into
 * null (non-finite values, see render/json.ts) are accepted as null where the report can show a dash.
 */
import { z } from 'zod';

const num = z.number();
/** A number the report can do without (missing, or null for a non-finite value). */
const optNum = z.number().nullish();
const optStr = z.string().nullish();

// ---- camera ----------------------------------------------------------------------------------------------

const curvePoint = z.looseObject({
  signalAdu: num,
  varianceAdu2: num,
  gainElectronsPerAdu: optNum,
  gainUncertaintyElectronsPerAdu: optNum,
  exposureSeconds: optNum,
  inFit: z.boolean(),
  saturated: z.boolean().nullish(),
  excludedBecause: optStr,
  files: z.array(z.string()).nullish(),
});

const ptcFit = z.looseObject({
  gainElectronsPerAdu: num,
  gainUncertaintyElectronsPerAdu: optNum,
  slopeAduPerElectron: num,
  interceptAdu2: num,
  reducedChiSquare: optNum,
  pointsUsed: optNum,
  window: z.looseObject({ minimumSignalAdu: optNum, maximumSignalAdu: optNum, basis: optStr }).nullish(),
});

const bias = z.looseObject({
  readNoiseAdu: num,
  readNoiseElectrons: optNum,
  readNoiseUncertaintyElectrons: optNum,
  offsetAdu: optNum,
  pairCount: optNum,
});

const fullWell = z.looseObject({
  reached: z.boolean(),
  saturationSignalAdu: optNum,
  fullWellElectrons: optNum,
  limitedBy: optStr,
});

const linearity = z.looseObject({
  linearityErrorPercent: optNum,
  points: z.array(z.looseObject({ exposureSeconds: optNum, signalAdu: num, deviationPercent: num })),
});

const darkTemperature = z.looseObject({
  temperatureCelsius: optNum,
  levels: z.array(z.looseObject({ exposureSeconds: num, levelAdu: num })),
  darkCurrentElectronsPerSecond: optNum,
  darkCurrentUncertaintyElectronsPerSecond: optNum,
  method: optStr,
});

const dark = z.looseObject({
  temperatures: z.array(darkTemperature),
  referenceTemperatureCelsius: optNum,
  darkCurrentElectronsPerSecond: optNum,
  darkDoublingCelsius: optNum,
  hotPixels: z.looseObject({ count: optNum, fraction: optNum, thresholdSigma: optNum }).nullish(),
  ampGlow: z.looseObject({ detected: z.boolean(), edge: optStr }).nullish(),
});

const cameraMeasurement = {
  gainElectronsPerAdu: optNum,
  gainUncertaintyElectronsPerAdu: optNum,
  readNoiseElectrons: optNum,
  readNoiseAdu: optNum,
  offsetAdu: optNum,
  fullWellElectrons: optNum,
  fullWellLimitedBy: optStr,
  darkCurrentElectronsPerSecond: optNum,
  linearityErrorPercent: optNum,
  prnuPercent: optNum,
  dsnuElectrons: optNum,
  hotPixelCount: optNum,
  bias: bias.nullish(),
  curve: z.array(curvePoint),
  fit: ptcFit.nullish(),
  fullWell: fullWell.nullish(),
  linearity: linearity.nullish(),
  dark: dark.nullish(),
};

const channel = z.looseObject({ ...cameraMeasurement, channel: optStr });

const diagnostic = z.looseObject({ code: z.string(), severity: optStr, message: optStr });

/** `subgauge.camera/1`: the fields the report shows. */
export const cameraDocumentSchema = z.looseObject({
  schema: z.literal('subgauge.camera/1'),
  ...cameraMeasurement,
  // The headline numbers must be there (null only when non-finite).
  gainElectronsPerAdu: z.number().nullable(),
  readNoiseElectrons: z.number().nullable(),
  fullWellElectrons: z.number().nullable(),
  settings: z
    .looseObject({
      gain: z.union([z.number(), z.string()]).nullish(),
      offset: z.union([z.number(), z.string()]).nullish(),
      binning: z.looseObject({ x: num, y: num }).nullish(),
      width: optNum,
      height: optNum,
    })
    .nullish(),
  cfa: z.looseObject({ pattern: z.string(), combination: optStr }).nullish(),
  channels: z.record(z.string(), channel).nullish(),
  frames: z
    .looseObject({
      used: z.array(z.looseObject({ file: z.string() })).nullish(),
      leftOut: z.array(z.looseObject({ file: z.string(), reason: optStr, detail: optStr })).nullish(),
    })
    .nullish(),
  diagnostics: z.array(diagnostic).nullish(),
});

// ---- sky -------------------------------------------------------------------------------------------------

const skySub = z.looseObject({
  file: z.string(),
  filter: z.string(),
  channel: optStr,
  exposureSeconds: num,
  startTimeMs: optNum,
  skyElectrons: optNum,
  skyRateElectronsPerSecond: optNum,
  darkElectrons: optNum,
  readNoisePenaltyPercent: z.number().nullable(),
  status: z.enum(['sky-limited', 'read-noise-limited']),
  minimumExposureSeconds: optNum,
});

const subLengthRow = z.looseObject({ subSeconds: num, subs: optNum, relativeSnr: num, readNoisePenaltyPercent: optNum });

const skyFilter = z.looseObject({
  filter: z.string(),
  subs: num,
  skyLimitedSubs: num,
  medianSkyRateElectronsPerSecond: optNum,
  recommendationRateElectronsPerSecond: optNum,
  rule: optStr,
  limitingChannel: optStr,
  recommendedMinimumExposureSeconds: optNum,
  medianExposureSeconds: optNum,
  subLengthTable: z.array(subLengthRow).nullish(),
});

/** `subgauge.sky/1`: camera numbers used, per-sub records, per-filter summaries and the penalty limit. */
export const skyDocumentSchema = z.looseObject({
  schema: z.literal('subgauge.sky/1'),
  camera: z
    .looseObject({
      gainElectronsPerAdu: optNum,
      readNoiseElectrons: optNum,
      offsetAdu: optNum,
      darkCurrentElectronsPerSecond: optNum,
      source: optStr,
    })
    .nullish(),
  subs: z.array(skySub),
  filters: z.array(skyFilter),
  maxPenaltyPercent: num,
  /** Total integration the sub-length tables were made for (s), when the writer gives it. */
  totalSeconds: optNum,
});

// ---- audit -----------------------------------------------------------------------------------------------

const trail = z.looseObject({ x0: num, y0: num, x1: num, y1: num, lengthPixels: optNum, widthPixels: optNum });

const frameMetrics = z.looseObject({
  startTimeMs: optNum,
  exposureSeconds: optNum,
  filter: optStr,
  object: optStr,
  width: optNum,
  height: optNum,
  backgroundAdu: optNum,
  noiseAdu: optNum,
  starCount: optNum,
  fwhmPixels: optNum,
  elongation: optNum,
  trails: z.array(trail).nullish(),
});

const reasonDetail = z.looseObject({
  reason: z.string(),
  metric: z.string(),
  test: optStr,
  value: z.union([z.number(), z.string()]).nullish(),
  reference: z.union([z.number(), z.string()]).nullish(),
  limit: z.union([z.number(), z.string()]).nullish(),
});

const auditFrame = z.looseObject({
  file: z.string(),
  verdict: z.enum(['keep', 'review', 'reject']),
  reasons: z.array(z.string()),
  details: z.array(reasonDetail).nullish(),
  metrics: frameMetrics.nullable(),
  skyAdu: optNum,
  weight: optNum,
  notes: z.array(z.string()).nullish(),
  error: z.looseObject({ code: z.string(), message: optStr }).nullish(),
});

const stackEstimate = z.looseObject({
  frameCount: num,
  totalExposureSeconds: optNum,
  kishEffectiveFrames: optNum,
  equivalentTypicalFrames: optNum,
  snrGain: optNum,
});

const forecast = z.looseObject({
  filter: optStr,
  weightMethod: optStr,
  all: stackEstimate,
  notRejected: stackEstimate.nullish(),
  kept: stackEstimate,
  keptVsAll: z
    .looseObject({ weightedSnrRatio: optNum, equalWeightSnrRatio: optNum, exposureFraction: optNum })
    .nullish(),
});

const calibrationMatch = z.looseObject({ status: z.string(), files: z.array(z.string()).nullish(), rule: optStr });

const lightGroup = z.looseObject({
  index: optNum,
  filter: optStr,
  exposureSeconds: optNum,
  lightCount: num,
  temperatureCelsius: optNum,
  bias: calibrationMatch.nullish(),
  dark: calibrationMatch.nullish(),
  flat: calibrationMatch.nullish(),
  flatDark: calibrationMatch.nullish(),
  flagged: z.boolean().nullish(),
});

/** `subgauge.audit/1`: frames with verdicts and reasons, counts, forecast and session facts. */
export const auditDocumentSchema = z.looseObject({
  schema: z.literal('subgauge.audit/1'),
  frames: z.array(auditFrame),
  counts: z.looseObject({
    frames: num,
    keep: num,
    review: num,
    reject: num,
    byReason: z.record(z.string(), z.number()).nullish(),
  }),
  forecast: z.array(forecast).nullish(),
  groups: z.array(lightGroup).nullish(),
  gaps: z
    .looseObject({
      timedFrameCount: optNum,
      cadenceSeconds: optNum,
      firstStartMs: optNum,
      lastStartMs: optNum,
      gaps: z.array(z.looseObject({ afterFile: z.string(), beforeFile: z.string(), stepSeconds: num })).nullish(),
    })
    .nullish(),
  consistency: z
    .looseObject({
      temperature: z
        .looseObject({ sensorMedianCelsius: optNum, sensorMinCelsius: optNum, sensorMaxCelsius: optNum })
        .nullish(),
    })
    .nullish(),
  notes: z.array(z.string()).nullish(),
});

export type CameraDocument = z.infer<typeof cameraDocumentSchema>;
export type CameraChannelDocument = z.infer<typeof channel>;
export type CurvePointDocument = z.infer<typeof curvePoint>;
export type SkyDocument = z.infer<typeof skyDocumentSchema>;
export type SkySubDocument = z.infer<typeof skySub>;
export type SkyFilterDocument = z.infer<typeof skyFilter>;
export type AuditDocument = z.infer<typeof auditDocumentSchema>;
export type AuditFrameDocument = z.infer<typeof auditFrame>;
export type TrailDocument = z.infer<typeof trail>;

/** A result document the report can show. */
export type ResultDocument = CameraDocument | SkyDocument | AuditDocument;

/** The schema tags the report reads, with their schemas. */
export const RESULT_SCHEMAS = {
  'subgauge.camera/1': cameraDocumentSchema,
  'subgauge.sky/1': skyDocumentSchema,
  'subgauge.audit/1': auditDocumentSchema,
} as const;
