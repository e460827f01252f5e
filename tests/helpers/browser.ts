import fs from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { createApp } from '@/server/app';
import { closeContext, createContext, type Ctx } from '@/server/context';
import { loadEnv } from '@/server/env';
import { startQueue } from '@/server/jobs/queue';
import { startScanWorkers } from '@/server/jobs/scan-worker';
import { startStripeFake, type StripeFake } from '@/server/fakes/stripe';
import { fakeStripeEnv, TEST_STRIPE_KEY, TEST_WEBHOOK_SECRET } from './billing';
import { createTestDatabase } from './db';

export const SCREENSHOT_DIR = path.resolve(__dirname, '../../test-results/screenshots');
export const VIEWPORTS = { phone: { width: 390, height: 844 }, wide: { width: 1280, height: 800 } } as const;
export type ViewportName = keyof typeof VIEWPORTS;

export type E2E = { base: string; ctx: Ctx; browser: Browser; close: () => Promise<void>; stripeFake?: StripeFake };

/**
 * The real server (API + exported web app from dist/) on a free port with a fresh database, and
 * Debian's Chromium driven by playwright-core. `npm test` builds dist/ before running these.
 */
export async function startE2E(opts: { jobs?: boolean; stripe?: boolean } = {}): Promise<E2E> {
  if (process.env.CHROMIUM_PROBLEM) throw new Error(process.env.CHROMIUM_PROBLEM);
  const db = await createTestDatabase();
  // Port first, so PUBLIC_URL (trusted origin, links in mail) is the real address.
  const probe = await new Promise<Server>((resolve) => {
    const s = require('node:http').createServer();
    s.listen(0, '127.0.0.1', () => resolve(s));
  });
  const port = (probe.address() as AddressInfo).port;
  await new Promise((r) => probe.close(r));
  const base = `http://127.0.0.1:${port}`;
  // Billing: the payment fake on its own loopback port, sending its webhooks to this server.
  const stripeFake = opts.stripe
    ? await startStripeFake({ secretKey: TEST_STRIPE_KEY, webhookSecret: TEST_WEBHOOK_SECRET, webhookUrl: `${base}/api/billing/webhook`, log: () => {} })
    : undefined;
  const ctx = createContext(
    loadEnv({ DATABASE_URL: db.url, NODE_ENV: 'development', PUBLIC_URL: base, PORT: String(port), AUTH_RATE_LIMIT: '1000', RENDER_RATE_LIMIT: '100000', ...(stripeFake ? fakeStripeEnv(stripeFake.port) : {}) }),
  );
  // Scans need the job queue and a worker, as `npm start` runs them.
  let stopWorkers = async () => {};
  if (opts.jobs) {
    ctx.jobs = await startQueue(ctx.env);
    stopWorkers = await startScanWorkers(ctx, ctx.jobs, 1);
  }
  const server = await new Promise<Server>((resolve) => {
    const s = createApp(ctx).listen(port, '127.0.0.1', () => resolve(s));
  });
  const stopServer = async () => {
    await stopWorkers();
    await new Promise((r) => server.close(r));
    await stripeFake?.close();
    await closeContext(ctx);
    await db.drop();
  };
  // playwright-core gives every launch a fresh temporary profile of its own.
  const browser = await chromium
    .launch({
    executablePath: '/usr/bin/chromium',
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
    })
    .catch(async (err: unknown) => {
      await stopServer();
      throw err;
    });
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return {
    base,
    ctx,
    stripeFake,
    browser,
    close: async () => {
      await browser.close();
      await stopServer();
    },
  };
}

export async function newPage(e: E2E, viewport: ViewportName): Promise<{ context: BrowserContext; page: Page }> {
  const context = await e.browser.newContext({ viewport: VIEWPORTS[viewport], baseURL: e.base });
  const page = await context.newPage();
  page.setDefaultTimeout(15_000);
  const errors: string[] = [];
  page.on('pageerror', (err) => errors.push(err.message));
  // A resource, style or script the content security policy refused (server/lib/security-headers.ts)
  // is a broken screen too: Chromium reports it on the console.
  page.on('console', (m) => {
    if (m.type() === 'error' && /Content Security Policy/i.test(m.text())) errors.push(`CSP: ${m.text()}`);
  });
  uncaught.set(page, errors);
  return { context, page };
}

/** Uncaught errors the page threw so far, and refusals of the content security policy (a screen that crashed fails its test). */
export const pageErrors = (page: Page): string[] => uncaught.get(page) ?? [];
const uncaught = new WeakMap<Page, string[]>();

export async function shot(page: Page, viewport: ViewportName, name: string) {
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, `${viewport}-${name}.png`), fullPage: true });
}

/**
 * A screenshot of the whole screen: the app scrolls inside its own frame, so the window is made as
 * tall as the content for the picture, then put back.
 */
export async function fullShot(page: Page, vp: ViewportName, name: string) {
  const extra = await page.evaluate(() => {
    let el: HTMLElement | null = document.querySelector('[role="main"]');
    while (el && !/(auto|scroll)/.test(getComputedStyle(el).overflowY)) el = el.parentElement;
    return el ? el.scrollHeight - el.clientHeight : 0;
  });
  const size = VIEWPORTS[vp];
  if (extra > 0) {
    await page.setViewportSize({ width: size.width, height: Math.min(size.height + extra, 8000) });
    await page.waitForTimeout(200);
  }
  await shot(page, vp, name);
  if (extra > 0) await page.setViewportSize(size);
}

export const E2E_PASSWORD = 'a-long-test-password';

/** Signs up on the sign-up screen and waits for the signed-in home of someone in no group yet. */
export async function signUpInBrowser(page: Page, name: string, email: string, password = E2E_PASSWORD) {
  await page.goto('/sign-up');
  await page.getByLabel('Your name').fill(name);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Create account', exact: true }).click();
  await page.getByRole('region', { name: 'You are not in a group yet' }).waitFor();
}

/**
 * Calls the API from the page (its session cookie and origin) and returns the answer; throws
 * with the status and body on anything but 2xx. Code as text: it runs in the page as written.
 */
export async function apiFromPage<T = Record<string, unknown>>(page: Page, method: string, url: string, body?: unknown): Promise<T> {
  const init = body === undefined ? `{ method: ${JSON.stringify(method)} }` : `{ method: ${JSON.stringify(method)}, headers: { 'Content-Type': 'application/json' }, body: ${JSON.stringify(JSON.stringify(body))} }`;
  const [status, answer] = (await page.evaluate(`fetch(${JSON.stringify(url)}, ${init}).then((r) => r.json().then((j) => [r.status, j]))`)) as [number, T];
  if (status >= 300) throw new Error(`${method} ${url}: ${status} ${JSON.stringify(answer)}`);
  return answer;
}
