import { cleanup, fireEvent, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { fakeFetch, renderWithProviders } from '../../../test/render';
import { ChangePasswordForm } from './change-password-form';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function fill(current: string, next: string, repeat = next) {
  fireEvent.input(screen.getByLabelText('Current password'), { target: { value: current } });
  fireEvent.input(screen.getByLabelText('New password'), { target: { value: next } });
  fireEvent.input(screen.getByLabelText('New password again'), { target: { value: repeat } });
  fireEvent.click(screen.getByRole('button', { name: 'Save new password' }));
}

describe('ChangePasswordForm', () => {
  it('refuses two different new passwords before asking the server', async () => {
    const f = fakeFetch({});
    vi.stubGlobal('fetch', f.fn);
    renderWithProviders(<ChangePasswordForm onChanged={vi.fn()} />);
    fill('my-old-password-1', 'harbour-lantern-4172', 'harbour-lantern-4173');
    expect(await screen.findByText('The two new passwords differ')).toBeTruthy();
    expect(f.calls).toEqual([]);
  });

  it('shows the server’s field errors in place (wrong current password)', async () => {
    vi.stubGlobal(
      'fetch',
      fakeFetch({
        'POST /api/auth/password': { status: 400, body: { error: { code: 'validation_failed', message: 'The current password is not right', fields: { current: ['The current password is not right'] } } } },
      }).fn,
    );
    const onChanged = vi.fn();
    renderWithProviders(<ChangePasswordForm onChanged={onChanged} />);
    fill('not-my-password-1', 'harbour-lantern-4172');
    const err = await screen.findByText('The current password is not right');
    expect(screen.getByLabelText('Current password').getAttribute('aria-describedby')).toContain(err.id);
    expect(onChanged).not.toHaveBeenCalled();
  });

  it('sends current and next only, and reports the change', async () => {
    const f = fakeFetch({
      'POST /api/auth/password': { status: 200, body: { id: 'u1', email: 'pat@x.test', name: 'Pat', role: 'lead', siteName: 'Demo', mustChangePassword: false } },
    });
    vi.stubGlobal('fetch', f.fn);
    const onChanged = vi.fn();
    renderWithProviders(<ChangePasswordForm onChanged={onChanged} />);
    fill('my-old-password-1', 'harbour-lantern-4172');
    await waitFor(() => expect(onChanged).toHaveBeenCalledWith(expect.objectContaining({ mustChangePassword: false })));
    expect(JSON.parse(String(f.calls[0]!.init!.body))).toEqual({ current: 'my-old-password-1', next: 'harbour-lantern-4172' });
  });
});
