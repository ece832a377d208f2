import { describe, expect, it, vi } from 'vitest';
import { render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { SiteSettings } from '@ebbgate/shared';
import { SettingsForm } from './settings-form';

const SETTINGS: SiteSettings = {
  analysis: {
    cyclesToAverage: 3,
    windowSeconds: 60,
    bands: [
      { id: 'ppv-grey-zone', index: 'ppv', lower: 9, upper: 13, unit: '%', label: 'Grey zone', source: 'Cannesson et al., Anesthesiology 2011 (from memory)' },
    ],
  },
  delivery: { observationStatus: 'preliminary', notValidPolicy: 'withhold' },
  alerts: { recipients: ['oncall@harrowmere.example'], destinationDownMinutes: 5, failureThreshold: 10 },
};

describe('settings form (shared siteSettingsSchema)', () => {
  it('rejects a band without a source and a malformed recipient inline; saves the recipients as a list', async () => {
    const onSubmit = vi.fn();
    render(<SettingsForm settings={SETTINGS} readOnly={false} busy={false} error={null} onSubmit={onSubmit} />);
    await userEvent.clear(screen.getByLabelText('Band 1 source'));
    await userEvent.type(screen.getByLabelText('Band 1 source'), 'x');
    await userEvent.click(screen.getByRole('button', { name: 'Save settings' }));
    expect(await screen.findByText('name the source of the band')).toBeTruthy();
    expect(onSubmit).not.toHaveBeenCalled();

    await userEvent.type(screen.getByLabelText('Band 1 source'), ' Michard 2000');
    await userEvent.type(screen.getByLabelText('Alert recipients'), '\nnot-an-address');
    await userEvent.click(screen.getByRole('button', { name: 'Save settings' }));
    expect(await screen.findByText('not an e-mail address: not-an-address')).toBeTruthy();
    expect(onSubmit).not.toHaveBeenCalled();

    await userEvent.clear(screen.getByLabelText('Alert recipients'));
    await userEvent.type(screen.getByLabelText('Alert recipients'), 'a@harrowmere.example, b@harrowmere.example');
    await userEvent.click(screen.getByRole('button', { name: 'Save settings' }));
    await waitFor(() => expect(onSubmit).toHaveBeenCalledTimes(1));
    expect(onSubmit.mock.calls[0]![0].alerts.recipients).toEqual(['a@harrowmere.example', 'b@harrowmere.example']);
    expect(onSubmit.mock.calls[0]![0].analysis.bands[0].source).toBe('x Michard 2000');
  });

  it('is read-only for non-admins', () => {
    render(<SettingsForm settings={SETTINGS} readOnly busy={false} error={null} onSubmit={() => {}} />);
    expect(screen.queryByRole('button', { name: 'Save settings' })).toBeNull();
    // A disabled fieldset disables every control inside it (HTML: the fieldset element).
    expect((screen.getByLabelText('Cycles averaged per window').closest('fieldset') as HTMLFieldSetElement).disabled).toBe(true);
  });
});
