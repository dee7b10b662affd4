import { cleanup, screen, within } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import type { Role } from '../../../shared/schemas/auth';
import { renderWithProviders } from '../../test/render';
import { AppNav } from './app-nav';
import { AppShell } from './app-shell';

afterEach(cleanup);

function navNames(role: Role): string[] {
  renderWithProviders(<AppNav role={role} />);
  const nav = screen.getByRole('navigation', { name: 'Main' });
  const names = within(nav)
    .getAllByRole('link')
    .map((a) => a.textContent ?? '');
  cleanup();
  return names;
}

describe('AppNav', () => {
  it('shows the shared areas to every role', () => {
    for (const role of ['technician', 'lead', 'admin', 'auditor'] as const) {
      expect(navNames(role).slice(0, 5)).toEqual(['Queue', 'Instruments', 'Standards', 'Bench', 'Records']);
    }
  });

  it('shows Users and Outbox only to admin, Review to leads, Audit to lead, admin and auditor', () => {
    expect(navNames('technician')).toEqual(['Queue', 'Instruments', 'Standards', 'Bench', 'Records']);
    expect(navNames('lead')).toEqual(['Queue', 'Instruments', 'Standards', 'Bench', 'Records', 'Review', 'Audit']);
    expect(navNames('auditor')).toEqual(['Queue', 'Instruments', 'Standards', 'Bench', 'Records', 'Audit']);
    expect(navNames('admin')).toEqual(['Queue', 'Instruments', 'Standards', 'Bench', 'Records', 'Audit', 'Users', 'Outbox']);
  });

  it('gives each link a data-testid and marks the current page', () => {
    renderWithProviders(<AppNav role="admin" />, { path: '/users' });
    const users = screen.getByTestId('nav-users');
    expect(users.getAttribute('href')).toBe('/users');
    expect(users.getAttribute('aria-current')).toBe('page');
    expect(screen.getByTestId('nav-queue').getAttribute('aria-current')).toBeNull();
  });
});

describe('AppShell', () => {
  it('shows the product, site, user and role, and no Users link for a technician', () => {
    renderWithProviders(
      <AppShell me={{ id: 'u', email: 't@x.test', name: 'Ari Tech', role: 'technician', siteName: 'North Works' }} onSignOut={() => {}}>
        <p>page</p>
      </AppShell>,
    );
    expect(screen.getByText('Stillpoint')).toBeTruthy();
    expect(screen.getByTestId('site-name').textContent).toBe('North Works');
    expect(screen.getByTestId('current-user').textContent).toContain('Ari Tech');
    expect(screen.getByTestId('current-role').textContent).toBe('Technician');
    expect(screen.queryByTestId('nav-users')).toBeNull();
    expect(screen.queryByTestId('nav-audit')).toBeNull();
    expect(screen.getByRole('button', { name: /bench theme/i }).getAttribute('aria-pressed')).toBe('false');
  });
});
