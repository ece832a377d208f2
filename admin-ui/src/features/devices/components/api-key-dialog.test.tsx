import { describe, expect, it, vi } from 'vitest';
import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { ApiKeyDialog } from './api-key-dialog';

describe('API key dialog', () => {
  it('shows the key once with a copy button that writes it to the clipboard', async () => {
    const user = userEvent.setup();
    const writeText = vi.spyOn(navigator.clipboard, 'writeText');
    const onClose = vi.fn();
    render(<ApiKeyDialog issued={{ apiKey: 'ebk_test_123', keyId: 'k1', createdAt: '2026-12-01T00:00:00Z' }} monitor="0223456789ABCDEF" onClose={onClose} />);
    expect(screen.getByTestId('api-key').textContent).toBe('ebk_test_123');
    expect(screen.getByText('Shown once.')).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'Copy' }));
    expect(writeText).toHaveBeenCalledWith('ebk_test_123');
    expect(await screen.findByRole('button', { name: 'Copied' })).toBeTruthy();
    await user.click(screen.getByRole('button', { name: 'I have stored the key' }));
    expect(onClose).toHaveBeenCalled();
  });
});
