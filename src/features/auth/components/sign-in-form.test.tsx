import { cleanup, fireEvent, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { fakeFetch, renderWithProviders } from '../../../test/render';
import { SignInForm, TOO_MANY_ATTEMPTS } from './sign-in-form';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const me = { id: 'u1', email: 'tech@stillpoint-demo.test', name: 'Tech', role: 'technician', siteName: 'Demo site' };

function fill(email: string, password: string) {
  fireEvent.input(screen.getByLabelText('Email'), { target: { value: email } });
  fireEvent.input(screen.getByLabelText('Password'), { target: { value: password } });
  fireEvent.click(screen.getByRole('button', { name: 'Sign in' }));
}

describe('SignInForm', () => {
  it('shows field errors from the schema and sends nothing', async () => {
    const f = fakeFetch({});
    vi.stubGlobal('fetch', f.fn);
    renderWithProviders(<SignInForm onSignedIn={() => {}} />);
    fill('not-an-email', '');
    expect(await screen.findByText('Enter a valid email address')).toBeTruthy();
    expect(screen.getByText('Enter your password')).toBeTruthy();
    expect(screen.getByLabelText('Email').getAttribute('aria-invalid')).toBe('true');
    expect(f.calls).toHaveLength(0);
  });

  it("shows the server's message on 401", async () => {
    const f = fakeFetch({ 'POST /api/auth/login': { status: 401, body: { error: { code: 'unauthenticated', message: 'Email or password is not right' } } } });
    vi.stubGlobal('fetch', f.fn);
    const onSignedIn = vi.fn();
    renderWithProviders(<SignInForm onSignedIn={onSignedIn} />);
    fill('tech@stillpoint-demo.test', 'wrong-password');
    const alert = await screen.findByText('Email or password is not right');
    expect(alert.getAttribute('role')).toBe('alert');
    expect(onSignedIn).not.toHaveBeenCalled();
    expect(JSON.parse(String(f.calls[0]?.init?.body))).toEqual({ email: 'tech@stillpoint-demo.test', password: 'wrong-password' });
  });

  it('says "Too many attempts" on 429', async () => {
    vi.stubGlobal('fetch', fakeFetch({ 'POST /api/auth/login': { status: 429, body: { error: { code: 'rate_limited', message: 'rate limited' } } } }).fn);
    renderWithProviders(<SignInForm onSignedIn={() => {}} />);
    fill('tech@stillpoint-demo.test', 'whatever');
    expect(await screen.findByText(TOO_MANY_ATTEMPTS)).toBeTruthy();
    expect(TOO_MANY_ATTEMPTS.startsWith('Too many attempts')).toBe(true);
  });

  it('places server field errors (400) next to their fields', async () => {
    vi.stubGlobal(
      'fetch',
      fakeFetch({
        'POST /api/auth/login': { status: 400, body: { error: { code: 'validation_failed', message: 'Check the form', fields: { email: ['Unknown domain'] } } } },
      }).fn,
    );
    renderWithProviders(<SignInForm onSignedIn={() => {}} />);
    fill('tech@stillpoint-demo.test', 'x');
    const msg = await screen.findByText('Unknown domain');
    expect(screen.getByLabelText('Email').getAttribute('aria-describedby')).toBe(msg.id);
  });

  it('signs in, normalises the email and seeds the signed-in user', async () => {
    vi.stubGlobal('fetch', fakeFetch({ 'POST /api/auth/login': { status: 200, body: me } }).fn);
    const onSignedIn = vi.fn();
    const { queryClient } = renderWithProviders(<SignInForm onSignedIn={onSignedIn} />);
    fill('  Tech@Stillpoint-Demo.test ', 'stillpoint-demo');
    await waitFor(() => expect(onSignedIn).toHaveBeenCalledWith(me));
    expect(queryClient.getQueryData(['auth', 'me'])).toEqual(me);
  });
});
