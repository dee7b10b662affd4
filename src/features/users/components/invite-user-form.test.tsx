import { cleanup, fireEvent, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { fakeFetch, renderWithProviders } from '../../../test/render';
import { InviteUserForm } from './invite-user-form';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

function fillAndSubmit() {
  fireEvent.input(screen.getByLabelText('Name'), { target: { value: 'Dana Field' } });
  fireEvent.input(screen.getByLabelText('Email'), { target: { value: 'dana@stillpoint-demo.test' } });
  fireEvent.change(screen.getByLabelText('Role'), { target: { value: 'lead' } });
  fireEvent.input(screen.getByLabelText('Initial password'), { target: { value: 'long-enough-pass' } });
  fireEvent.click(screen.getByRole('button', { name: 'Invite' }));
}

describe('InviteUserForm', () => {
  it('shows server field errors in place (email taken, common password)', async () => {
    vi.stubGlobal(
      'fetch',
      fakeFetch({
        'POST /api/users': {
          status: 400,
          body: {
            error: {
              code: 'validation_failed',
              message: 'Check the form',
              fields: { email: ['Someone already uses this email'], password: ['This password is too common'] },
            },
          },
        },
      }).fn,
    );
    const onInvited = vi.fn();
    renderWithProviders(<InviteUserForm onInvited={onInvited} />);
    fillAndSubmit();
    const emailErr = await screen.findByText('Someone already uses this email');
    expect(screen.getByLabelText('Email').getAttribute('aria-describedby')).toContain(emailErr.id);
    const pwErr = screen.getByText('This password is too common');
    expect(screen.getByLabelText('Initial password').getAttribute('aria-describedby')).toContain(pwErr.id);
    // Placed in the fields, so the generic message is not repeated above the form.
    expect(screen.queryByText('Check the form')).toBeNull();
    expect(onInvited).not.toHaveBeenCalled();
  });

  it('shows a message without fields above the form', async () => {
    vi.stubGlobal('fetch', fakeFetch({ 'POST /api/users': { status: 403, body: { error: { code: 'forbidden', message: 'Admins only' } } } }).fn);
    renderWithProviders(<InviteUserForm onInvited={() => {}} />);
    fillAndSubmit();
    expect((await screen.findByText('Admins only')).getAttribute('role')).toBe('alert');
  });

  it('validates locally first (short password)', async () => {
    const f = fakeFetch({});
    vi.stubGlobal('fetch', f.fn);
    renderWithProviders(<InviteUserForm onInvited={() => {}} />);
    fireEvent.input(screen.getByLabelText('Initial password'), { target: { value: 'short' } });
    fireEvent.click(screen.getByRole('button', { name: 'Invite' }));
    expect(await screen.findByText('Use at least 10 characters')).toBeTruthy();
    expect(screen.getByText('Enter a name')).toBeTruthy();
    expect(f.calls).toHaveLength(0);
  });

  it('posts the body and reports the new user', async () => {
    const created = { id: 'n1', email: 'dana@stillpoint-demo.test', name: 'Dana Field', role: 'lead', active: true, createdAt: '2025-01-01T00:00:00Z', mustChangePassword: true, signInLockedUntil: null, signingLockedUntil: null };
    const f = fakeFetch({ 'POST /api/users': { status: 201, body: created } });
    vi.stubGlobal('fetch', f.fn);
    const onInvited = vi.fn();
    renderWithProviders(<InviteUserForm onInvited={onInvited} />);
    fillAndSubmit();
    await waitFor(() => expect(onInvited).toHaveBeenCalledWith(created));
    expect(JSON.parse(String(f.calls[0]?.init?.body))).toEqual({
      name: 'Dana Field',
      email: 'dana@stillpoint-demo.test',
      role: 'lead',
      password: 'long-enough-pass',
    });
  });
});
