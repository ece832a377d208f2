/** Predicted body weight, kg (Devine formula as used by ARDSNet): 50 (male) or 45.5 (female) + 0.91 × (height cm − 152.4). */
export function predictedBodyWeightKg(heightCm: number, sex: 'male' | 'female'): number {
  if (!(heightCm > 0)) throw new RangeError(`height must be positive, got ${heightCm}`);
  return (sex === 'male' ? 50 : 45.5) + 0.91 * (heightCm - 152.4);
}

/** Tidal volume normalised to predicted body weight, mL/kg. */
export function tidalVolumePerKg(tidalVolumeMl: number, heightCm: number, sex: 'male' | 'female'): number {
  return tidalVolumeMl / predictedBodyWeightKg(heightCm, sex);
}
