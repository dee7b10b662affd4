import { chromium, type Browser, type Page } from 'playwright-core';

/** Debian's Chromium; tests/e2e/global-setup.ts installs it when missing. */
export const CHROMIUM_PATH = '/usr/bin/chromium';

/** Headless, no sandbox (containers run as root), and no background traffic of the browser's own. */
export const CHROMIUM_ARGS = [
  '--headless=new',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

/** Launch Chromium with a new, empty profile (the default for `launch`). */
export function launchBrowser(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}

const LOCAL_HOSTS = new Set(['localhost', '127.0.0.1', '[::1]', '::1']);

/**
 * Record every request the page makes to a host that is not this machine.
 * Returns the live list; data:, blob: and about: URLs have no host and are ignored.
 */
export function recordOffHostRequests(page: Page): string[] {
  const offHost: string[] = [];
  page.on('request', (req) => {
    const url = new URL(req.url());
    if (!/^(https?|wss?):$/.test(url.protocol)) return;
    if (!LOCAL_HOSTS.has(url.hostname)) offHost.push(req.url());
  });
  return offHost;
}
