// Intensity normalization between physical images and network tensors (README, "Your own network
// as a prior"): network value = physical value * scale + offset, the physical value being mu
// (1/mm) or HU = 1000 (mu - mu_water) / mu_water.
import { InputError } from '../errors';
import type { ModelTensorInfo } from './description';

function requireMuWater(side: string, muWater: number | undefined): number {
  if (!(muWater !== undefined && muWater > 0 && Number.isFinite(muWater))) {
    throw new InputError(`model description ${side}.quantity: "hu" needs the scan's mu_water (rimfill.muWater), which this scan does not carry; calibrate it or describe the model in mu`);
  }
  return muWater;
}

/** Network input values from an image in mu (1/mm). */
export function toNetworkValues(mu: Float32Array, t: ModelTensorInfo, muWater?: number): Float32Array {
  const out = new Float32Array(mu.length);
  if (t.quantity === 'hu') {
    const mw = requireMuWater('input', muWater);
    // hu * scale + offset with hu = 1000 (mu - mw) / mw.
    const a = (1000 / mw) * t.scale, b = t.offset - 1000 * t.scale;
    for (let i = 0; i < mu.length; i++) out[i] = mu[i] * a + b;
  } else {
    for (let i = 0; i < mu.length; i++) out[i] = mu[i] * t.scale + t.offset;
  }
  return out;
}

/** An image in mu (1/mm) from network output values. */
export function fromNetworkValues(values: Float32Array, t: ModelTensorInfo, muWater?: number): Float32Array {
  const out = new Float32Array(values.length);
  if (t.quantity === 'hu') {
    const mw = requireMuWater('output', muWater);
    // mu = mw + mw * hu / 1000 with hu = (value - offset) / scale.
    const a = mw / (1000 * t.scale), b = mw - (t.offset * mw) / (1000 * t.scale);
    for (let i = 0; i < values.length; i++) out[i] = values[i] * a + b;
  } else {
    const a = 1 / t.scale, b = -t.offset / t.scale;
    for (let i = 0; i < values.length; i++) out[i] = values[i] * a + b;
  }
  return out;
}
