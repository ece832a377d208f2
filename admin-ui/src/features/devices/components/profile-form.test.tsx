import { describe, expect, it, vi } from 'vitest';
import { render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { ProfileForm } from './profile-form';

function setup() {
  const onSubmit = vi.fn();
  render(<ProfileForm busy={false} error={null} onSubmit={onSubmit} onCancel={() => {}} />);
  return onSubmit;
}

describe('monitor profile form (shared monitorProfileInputSchema)', () => {
  it('flags each bad channel field inline: empty code, zero gain, missing rate', async () => {
    const onSubmit = setup();
    await userEvent.type(screen.getByLabelText('Profile name'), 'Bay monitor');
    await userEvent.type(screen.getByLabelText('Manufacturer'), 'Demo Instruments');
    await userEvent.type(screen.getByLabelText('Model'), 'DI-7');
    await userEvent.clear(screen.getByLabelText('Channel 1 gain'));
    await userEvent.type(screen.getByLabelText('Channel 1 gain'), '0');
    await userEvent.clear(screen.getByLabelText('Channel 1 sample rate'));
    await userEvent.click(screen.getByRole('button', { name: 'Create profile' }));
    expect(await screen.findByText('gain must not be 0')).toBeTruthy();
    expect(screen.getByLabelText('Channel 1 code').getAttribute('aria-invalid')).toBe('true');
    expect(screen.getByLabelText('Channel 1 sample rate').getAttribute('aria-invalid')).toBe('true');
    expect(onSubmit).not.toHaveBeenCalled();
  });

  it('refuses the same channel code twice (schema refine) and submits numbers, not strings, when fixed', async () => {
    const onSubmit = setup();
    await userEvent.type(screen.getByLabelText('Profile name'), 'Bay monitor');
    await userEvent.type(screen.getByLabelText('Manufacturer'), 'Demo Instruments');
    await userEvent.type(screen.getByLabelText('Model'), 'DI-7');
    await userEvent.type(screen.getByLabelText('Channel 1 code'), 'MDC_PRESS_BLD_ART_ABP');
    await userEvent.click(screen.getByRole('button', { name: 'Add channel' }));
    expect(screen.getAllByTestId('channel-row')).toHaveLength(2);
    await userEvent.type(screen.getByLabelText('Channel 2 code'), 'mdc_press_bld_art_abp');
    await userEvent.click(screen.getByRole('button', { name: 'Create profile' }));
    expect(await screen.findByText('each channel code may appear once')).toBeTruthy();
    expect(onSubmit).not.toHaveBeenCalled();

    await userEvent.clear(screen.getByLabelText('Channel 2 code'));
    await userEvent.type(screen.getByLabelText('Channel 2 code'), 'PLETH');
    await userEvent.click(screen.getByRole('button', { name: 'Create profile' }));
    await waitFor(() => expect(onSubmit).toHaveBeenCalledTimes(1));
    const body = onSubmit.mock.calls[0]![0];
    expect(body.channels).toHaveLength(2);
    expect(body.channels[0]).toMatchObject({ code: 'MDC_PRESS_BLD_ART_ABP', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125 });
    expect(body.channels[1]).toMatchObject({ code: 'PLETH', role: 'pleth', unit: '1' });
    expect(body.channels[0].label).toBeUndefined();
    expect(body.transports).toEqual(['http']);
  });
});
