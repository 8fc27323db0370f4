import type { Observation } from '../frame/observation.js';
import type { FrameObservationValues } from './types.js';

/**
 * The observation values the audit uses, from a header's `Observation` and the image size.
 * @param width NAXIS1 (px)
 * @param height NAXIS2 (px)
 * @example { file, kind: 'dark', ...frameObservationValues(observationOf(header), 6248, 4176) }
 */
export function frameObservationValues(obs: Observation, width: number, height: number): FrameObservationValues {
  return {
    startTimeMs: obs.startTimeMs,
    exposureSeconds: obs.exposureSeconds,
    filter: obs.filter,
    sensorTemperatureCelsius: obs.sensorTemperatureCelsius,
    setTemperatureCelsius: obs.setTemperatureCelsius,
    gainSetting: obs.gainSetting,
    offsetSetting: obs.offsetSetting,
    binningX: obs.binningX,
    binningY: obs.binningY,
    width,
    height,
    object: obs.object,
  };
}
