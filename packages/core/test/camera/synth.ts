// Test-only seeded frame sets built in TypeScript and passed through encodeFits → parseFits, for the fast
// error-path and shape tests (the accuracy checks use the independent numpy generator instead).
import { encodeFits, parseFits } from '../../src/fits/index.js';
import type { WriteCard } from '../../src/fits/types.js';
import type { CameraFrame } from '../../src/camera/sortFrames.js';
import { rng } from './helpers.js';

export interface SynthCamera {
  width: number;
  height: number;
  gainElectronsPerAdu: number;
  readNoiseElectrons: number;
  offsetAdu: number;
  fullWellElectrons: number;
  adcMaxAdu: number;
  prnu: number;
  darkElectronsPerSecond: number;
  bayer?: string;
}

export const SMALL_CAMERA: SynthCamera = {
  width: 64, height: 64, gainElectronsPerAdu: 2, readNoiseElectrons: 5, offsetAdu: 200, fullWellElectrons: 40000,
  adcMaxAdu: 65535, prnu: 0.01, darkElectronsPerSecond: 0.5,
};

export interface SynthFrameSpec {
  kind: string;
  electrons: number;
  exposureSeconds: number;
  file?: string;
  cards?: WriteCard[];
}

/** Frames of a made-up camera, each encoded with encodeFits and read back with parseFits. */
export function synthFrames(cam: SynthCamera, specs: SynthFrameSpec[], seed = 1, float = false): CameraFrame[] {
  const r = rng(seed);
  const n = cam.width * cam.height;
  const prnu = new Float64Array(n);
  for (let i = 0; i < n; i++) prnu[i] = 1 + cam.prnu * r.normal();
  return specs.map((s, k) => {
    const px = float ? new Float32Array(n) : new Uint16Array(n);
    for (let i = 0; i < n; i++) {
      const e = Math.min(cam.fullWellElectrons, r.poisson(s.electrons * prnu[i]! + cam.darkElectronsPerSecond * s.exposureSeconds));
      const adu = Math.round(e / cam.gainElectronsPerAdu + cam.offsetAdu + (cam.readNoiseElectrons / cam.gainElectronsPerAdu) * r.normal());
      px[i] = Math.max(0, Math.min(cam.adcMaxAdu, adu));
    }
    if (float) for (let i = 0; i < n; i++) px[i] = px[i]! / 65535;
    const cards: WriteCard[] = [
      { keyword: 'IMAGETYP', value: s.kind },
      { keyword: 'EXPTIME', value: s.exposureSeconds, real: true },
      { keyword: 'DATE-OBS', value: new Date(Date.UTC(2031, 0, 1, 20, 0, k * 10)).toISOString().slice(0, 19) },
      ...(cam.bayer ? [{ keyword: 'BAYERPAT', value: cam.bayer }] : []),
      ...(s.cards ?? []),
    ];
    const bytes = encodeFits([{ pixels: px, width: cam.width, height: cam.height, cards }]);
    const file = s.file ?? `synth/${s.kind.replace(/\s+/g, '_').toLowerCase()}_${String(k).padStart(3, '0')}.fits`;
    const hdu = parseFits(bytes, { file }).hdus[0]!;
    return { file, header: hdu.header, image: hdu.image! };
  });
}

/** A bias pair, `levels` flat pairs (electrons per frame, exposure ∝ level) and optional dark pairs. */
export function synthSet(cam: SynthCamera, levels: number[], options: { darks?: number[]; seed?: number; float?: boolean; biasPairs?: number } = {}): CameraFrame[] {
  const specs: SynthFrameSpec[] = [];
  for (let i = 0; i < 2 * (options.biasPairs ?? 1); i++) specs.push({ kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 });
  for (const l of levels) for (let i = 0; i < 2; i++) specs.push({ kind: 'Flat Field', electrons: l, exposureSeconds: l / 10000 });
  for (const t of options.darks ?? []) for (let i = 0; i < 2; i++) specs.push({ kind: 'Dark Frame', electrons: 0, exposureSeconds: t });
  return synthFrames(cam, specs, options.seed ?? 1, options.float ?? false);
}
