import { cleanup, fireEvent, screen, within } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import type { Role } from '../../../shared/schemas/auth';
import { renderWithProviders } from '../../test/render';
import { AppNav } from './app-nav';
import { useThemeStore } from '../../lib/theme';
import { AppShell } from './app-shell';
import { ThemeToggle } from './theme-toggle';

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
    // The theme toggle names the theme it selects.
    expect(screen.getByRole('button', { name: 'Use bench theme' })).toBeTruthy();
  });

  it('folds the navigation into a menu: the button says whether it is open, Escape closes it and focus returns', () => {
    renderWithProviders(
      <AppShell me={{ id: 'u', email: 'l@x.test', name: 'Lee Lead', role: 'lead', siteName: 'North Works' }} onSignOut={() => {}}>
        <p>page</p>
      </AppShell>,
    );
    const button = screen.getByRole('button', { name: 'Menu' });
    expect(button.getAttribute('aria-expanded')).toBe('false');
    const panel = document.getElementById(button.getAttribute('aria-controls') ?? '')!;
    expect(panel.className).toMatch(/(^|\s)hidden(\s|$)/);
    fireEvent.click(button);
    expect(button.getAttribute('aria-expanded')).toBe('true');
    expect(panel.className).not.toMatch(/(^|\s)hidden(\s|$)/);
    expect(document.activeElement).toBe(screen.getByTestId('nav-queue'));
    fireEvent.keyDown(document, { key: 'Escape' });
    expect(button.getAttribute('aria-expanded')).toBe('false');
    expect(document.activeElement).toBe(button);
    // A choice closes it, even the page already open.
    fireEvent.click(button);
    fireEvent.click(screen.getByTestId('nav-queue'));
    expect(button.getAttribute('aria-expanded')).toBe('false');
  });
});

describe('ThemeToggle', () => {
  it('names the theme it selects, and switches', () => {
    useThemeStore.getState().setTheme('light');
    renderWithProviders(<ThemeToggle />);
    fireEvent.click(screen.getByRole('button', { name: 'Use bench theme' }));
    expect(document.documentElement.dataset.theme).toBe('bench');
    expect(screen.getByRole('button', { name: 'Use light theme' })).toBeTruthy();
    useThemeStore.getState().setTheme('light');
  });
});
