import { describe, expect, it } from 'vitest';
import { render, screen, within } from '@testing-library/react';
import type { TidalVolumeChallengeResult } from '@/lib/analysis';
import { ChallengePanel, LineChecks, MechanicsPanel } from './line-checks';

const base: TidalVolumeChallengeResult = {
  engineVersion: '2.0.0',
  baselinePpv: 8.2,
  challengePpv: 12.6,
  deltaPpv: 4.4,
  threshold: 3.5,
  thresholdSource: 'Myatra et al., Crit Care Med 2017 (from memory)',
  verdict: 'positive',
  reasons: [],
  reasonTexts: [],
  baselineTidalVolumeMl: 390,
  challengeTidalVolumeMl: 520,
  baselineMlPerKg: 6,
  challengeMlPerKg: 8,
  stepAtSeconds: 60,
  challengeHeldSeconds: 62,
  baselineVerdict: 'valid',
  challengeVerdict: 'valid',
  baselinePressureSwingCmH2O: 11,
  challengePressureSwingCmH2O: 15,
  baselineFlags: [],
  challengeFlags: [],
  cautions: ['Decision support only.'],
};

describe('tidal volume challenge panel', () => {
  it('shows baseline and challenge PPV, the rise, the threshold with its source and the verdict in words', () => {
    render(<ChallengePanel challenge={base} />);
    const panel = screen.getByRole('region', { name: 'Tidal volume challenge' });
    expect(within(panel).getByTestId('challenge-verdict').textContent).toBe('PPV rose by the threshold or more');
    expect(panel.textContent).toContain('ΔPPV +4.4 points');
    expect(panel.textContent).toContain('8.2 %');
    expect(panel.textContent).toContain('12.6 %');
    expect(panel.textContent).toContain('390 mL (6.0 mL/kg PBW)');
    expect(panel.textContent).toContain('3.5 points (Myatra et al., Crit Care Med 2017 (from memory))');
  });

  it('says why a challenge cannot be judged instead of a verdict', () => {
    render(
      <ChallengePanel
        challenge={{
          ...base,
          verdict: 'cannot-be-judged',
          challengePpv: null,
          deltaPpv: null,
          reasons: ['step-too-short'],
          reasonTexts: ['The higher volume was held 30 s, under the minute the method needs.'],
        }}
      />,
    );
    expect(screen.getByTestId('challenge-verdict').textContent).toBe('Cannot be judged');
    expect(within(screen.getByRole('list', { name: 'Reasons the challenge cannot be judged' })).getByText(/held 30 s/)).toBeTruthy();
    expect(screen.queryByText(/ΔPPV/)).toBeNull();
  });
});

describe('line checks and mechanics', () => {
  it('shows fn, ζ and the Gardner region in words; compliance and driving pressure with the plateau source', () => {
    render(
      <>
        <LineChecks
          flushTests={[
            {
              releaseTime: 4.2,
              naturalFrequencyHz: 18.5,
              dampingRatio: 0.42,
              amplitudeRatio: 0.23,
              oscillations: 3,
              region: 'optimal',
              regionText: 'in the optimal region',
            },
          ]}
          dampingEstimate="adequate"
        />
        <MechanicsPanel
          mechanics={{
            peepCmH2O: 5,
            peakCmH2O: 24,
            plateauCmH2O: 19,
            plateauSource: 'estimated-from-peak',
            drivingPressureCmH2O: 14,
            complianceMlPerCmH2O: 32.1,
            complianceSource: 'airway-pressure',
            pressureSwingCmH2O: 19,
          }}
        />
      </>,
    );
    const body = document.body.textContent!;
    expect(body).toContain('18.5 Hz');
    expect(body).toContain('0.42');
    expect(body).toContain('Optimal — in the optimal region');
    expect(body).toContain('14.0 cmH₂O');
    expect(body).toContain('32.1 mL/cmH₂O');
    expect(body).toContain('estimated from the peak');
  });
});
