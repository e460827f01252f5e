import type { Page } from 'playwright-core';
import { fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';
import { figureSpec } from '../helpers/figures';

jest.setTimeout(240_000);

/**
 * Permanent links as a reader meets them: `/r/<slug>` opens the current version, an older version
 * points to the newer one, a result with nothing published says so, and a public figure's page
 * lists the versions it draws and cites itself with its permanent link.
 */

let e: E2E;
const seeded = {} as {
  groupName: string;
  current: { slug: string; title: string };
  retracted: { slug: string };
  draftOnly: { slug: string };
  figure: { id: string; title: string; pinTitle: string };
};

/** An invented falling limit curve with bands and a theory line (fictional Halcyon Ring numbers). */
function resultBody(title: string, scale: number, reference: string) {
  const x = [1, 1.5, 2, 2.5, 3, 3.5, 4];
  const exp = x.map((m) => scale * 30 * Math.exp(-1.2 * m));
  return {
    meta: { title, model: 'Invented leptophobic Z′', parameterName: "m(Z')", parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic', reference },
    curve: {
      x,
      observed: exp.map((v, i) => v * (1 + 0.1 * Math.cos(i))),
      expected: { '-2': exp.map((v) => v * 0.5), '-1': exp.map((v) => v * 0.7), '0': exp, '1': exp.map((v) => v * 1.4), '2': exp.map((v) => v * 1.9) },
    },
    theory: { x, central: x.map((m) => 300 * Math.exp(-1.7 * m)) },
  };
}

/** A JSON request through the API from the page (its session cookie); the status and the answer. */
async function send<T = Record<string, unknown>>(page: Page, method: string, url: string, body?: unknown): Promise<[number, T]> {
  // Code as text: it runs in the page as written (the test's transpiler would add helpers the page lacks).
  const init = body === undefined ? `{ method: ${JSON.stringify(method)} }` : `{ method: ${JSON.stringify(method)}, headers: { 'Content-Type': 'application/json' }, body: ${JSON.stringify(JSON.stringify(body))} }`;
  return (await page.evaluate(`fetch(${JSON.stringify(url)}, ${init}).then((r) => r.json().then((j) => [r.status, j]))`)) as [number, T];
}

async function ok<T = Record<string, unknown>>(page: Page, method: string, url: string, body?: unknown): Promise<T> {
  const [status, answer] = await send<T>(page, method, url, body);
  if (status >= 300) throw new Error(`${method} ${url}: ${status} ${JSON.stringify(answer)}`);
  return answer;
}

beforeAll(async () => {
  e = await startE2E();
  const { page, context } = await newPage(e, 'wide');
  await signUpInBrowser(page, 'Ines Curator', `permalinks-${Date.now().toString(36)}@lab.example`);
  seeded.groupName = 'Fictional Halcyon Ring Dilepton Team';
  const group = await ok<{ id: string }>(page, 'POST', '/api/groups', { name: seeded.groupName });
  const results = `/api/groups/${group.id}/results`;

  // Versions 1 and 2 published (1 then superseded), a version 3 draft on top: the current version is 2.
  const title = 'Halcyon Ring Z′ → μμ search <b>not bold</b>';
  const first = await ok<{ resultId: string; slug: string }>(page, 'POST', results, resultBody(title, 1, 'HR-EXO-2031-04'));
  await ok(page, 'POST', `${results}/${first.resultId}/versions/1/publish`, { public: true });
  await ok(page, 'POST', `${results}/${first.resultId}/versions`, { ...resultBody(title, 0.8, 'HR-EXO-2031-04'), changeNote: 'Full 2031 data' });
  await ok(page, 'POST', `${results}/${first.resultId}/versions/2/publish`, {});
  await ok(page, 'POST', `${results}/${first.resultId}/versions`, { ...resultBody(title, 0.7, 'HR-EXO-2031-04'), changeNote: 'Rework in progress' });
  seeded.current = { slug: first.slug, title };

  // Published, public, then retracted: nothing published is left.
  const withdrawn = await ok<{ resultId: string; slug: string }>(page, 'POST', results, resultBody('Plover diphoton excess (withdrawn)', 2, 'HR-EXO-2031-05'));
  await ok(page, 'POST', `${results}/${withdrawn.resultId}/versions/1/publish`, { public: true });
  await ok(page, 'POST', `${results}/${withdrawn.resultId}/versions/1/retract`, { reason: 'Wrong luminosity block' });
  seeded.retracted = { slug: withdrawn.slug };

  // Only a draft.
  const draft = await ok<{ resultId: string; slug: string }>(page, 'POST', results, resultBody('Osprey preliminary scan', 1.5, 'HR-EXO-2031-06'));
  seeded.draftOnly = { slug: draft.slug };

  // Group-only published result: drawn in the group's figure, hidden from the public.
  const hidden = await ok<{ resultId: string }>(page, 'POST', results, resultBody('Heron group-only dijet', 3, 'HR-EXO-2031-07'));
  await ok(page, 'POST', `${results}/${hidden.resultId}/versions/1/publish`, { public: false });

  const figureTitle = 'Halcyon Ring Z′ limits, one column';
  const figure = await ok<{ id: string }>(page, 'POST', `/api/groups/${group.id}/figures`, {
    spec: figureSpec([{ resultId: first.resultId, version: 2 }, { resultId: hidden.resultId, version: 1 }], { title: figureTitle }),
    public: true,
  });
  seeded.figure = { id: figure.id, title: figureTitle, pinTitle: title };
  await context.close();
}, 180_000);
afterAll(async () => e?.close());

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  test('/r/<slug> opens the newest published version; it cites that version by its own link', async () => {
    const { page, context } = await newPage(e, vp);
    await context.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: e.base });
    await page.goto(`/r/${seeded.current.slug}`);
    // The title is text, never markup.
    await page.getByRole('heading', { name: seeded.current.title, exact: true }).waitFor();
    await page.getByText(`Version 2 · ${seeded.groupName}`, { exact: true }).waitFor();
    await page.getByRole('note', { name: 'About this address' }).getByText(/today that is version 2/).waitFor();
    await page.getByRole('link', { name: 'Permanent link of version 2' }).waitFor();
    expect(await page.getByRole('status', { name: 'A newer version is published' }).count()).toBe(0);
    await fullShot(page, vp, 'permalink-current');

    // Cite: BibTeX and CSL-JSON, both with the version's permanent link and number.
    const cite = page.getByRole('button', { name: 'Cite version 2 of this result', exact: true });
    await cite.click();
    expect(await cite.getAttribute('aria-expanded')).toBe('true');
    const panel = page.getByRole('region', { name: 'Citation of version 2 of this result' });
    const bibtex = await panel.getByRole('textbox', { name: 'BibTeX text' }).inputValue();
    expect(bibtex).toContain(`\\url{${e.base}/r/${seeded.current.slug}/v2}`);
    expect(bibtex).toMatch(/^@misc\{bandwright:/);
    expect(bibtex).toContain('version = {2}');
    expect(bibtex).toContain(`author = {{${seeded.groupName}}}`);
    const csl = JSON.parse(await panel.getByRole('textbox', { name: 'CSL-JSON text' }).inputValue()) as Array<{ URL: string; version: string }>;
    expect([csl[0]!.URL, csl[0]!.version]).toEqual([`${e.base}/r/${seeded.current.slug}/v2`, '2']);
    // The box took the focus when the panel opened; the copy button copies the entry.
    expect(await page.evaluate('document.activeElement && document.activeElement.getAttribute("aria-label")')).toBe('BibTeX text');
    await panel.getByRole('button', { name: 'Copy BibTeX', exact: true }).click();
    await panel.getByRole('button', { name: 'Copied', exact: true }).waitFor();
    expect(await page.evaluate('navigator.clipboard.readText()')).toBe(bibtex);
    await fullShot(page, vp, 'permalink-cite');
    // Escape closes it, and the focus goes back to the Cite button.
    await page.keyboard.press('Escape');
    await panel.waitFor({ state: 'detached' });
    expect(await page.evaluate('document.activeElement && document.activeElement.getAttribute("aria-label")')).toBe('Cite version 2 of this result');
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });

  test('the public list searches Zprime as Z′ and has the signed-in list\'s filters', async () => {
    const { page, context } = await newPage(e, vp);
    await page.goto('/public');
    await page.getByLabel('Search public results').fill('Zprime');
    await page.getByRole('link', { name: new RegExp(`^${seeded.current.title.slice(0, 12)}`) }).first().waitFor();
    // On phones the filters start folded.
    const unfold = page.getByRole('button', { name: /^Filters and sort/ });
    if (await unfold.count()) await unfold.click();
    await page.getByRole('button', { name: 'Method: Any method', exact: true }).click();
    await page.getByRole('radio', { name: 'Pseudo-experiment CLs', exact: true }).click();
    await page.getByRole('region', { name: 'No public results match' }).waitFor();
    expect(page.url()).toContain('method=toys');
    expect(await page.getByRole('button', { name: /^State:/ }).count()).toBe(0);
    await page.getByRole('button', { name: 'Clear filters', exact: true }).click();
    await page.getByRole('link', { name: new RegExp(`^${seeded.current.title.slice(0, 12)}`) }).first().waitFor();
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });

  test('an older version says a newer one is published and links to it', async () => {
    const { page, context } = await newPage(e, vp);
    await page.goto(`/r/${seeded.current.slug}/v1`);
    await page.getByRole('heading', { name: seeded.current.title, exact: true }).waitFor();
    const notice = page.getByRole('status', { name: 'A newer version is published' });
    await notice.getByText('A newer version (v2) of this result is published.', { exact: true }).waitFor();
    await notice.getByText('This version (v1) is superseded and kept for reference.', { exact: true }).waitFor();
    await fullShot(page, vp, 'permalink-older');
    await notice.getByRole('link', { name: 'Open version 2, the newer version' }).click();
    await page.waitForURL(`**/r/${seeded.current.slug}/v2`);
    await page.getByText(`Version 2 · ${seeded.groupName}`, { exact: true }).waitFor();
    expect(await page.getByRole('status', { name: 'A newer version is published' }).count()).toBe(0);
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });

  test('nothing published, and unknown links, are said plainly', async () => {
    const { page, context } = await newPage(e, vp);
    await page.goto(`/r/${seeded.retracted.slug}`);
    await page.getByRole('region', { name: 'No published version' }).waitFor();
    await fullShot(page, vp, 'permalink-not-published');
    // A draft-only result is not revealed to the public.
    await page.goto(`/r/${seeded.draftOnly.slug}`);
    await page.getByRole('region', { name: 'Not found or not public' }).waitFor();
    await page.goto('/r/no-such-result-zz999');
    await page.getByRole('region', { name: 'Not found or not public' }).waitFor();
    await page.getByRole('link', { name: 'Sign in' }).first().waitFor();
    await page.goto('/f/00000000-0000-4000-8000-000000000000');
    await page.getByRole('region', { name: 'Not found or not public' }).waitFor();
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });

  test('the public figure page: picture, pins with their links, hidden layers, downloads, Cite', async () => {
    const { page, context } = await newPage(e, vp);
    await page.goto('/public/figures');
    await page.getByRole('link', { name: `${seeded.figure.title}: figure page` }).click();
    await page.waitForURL(`**/f/${seeded.figure.id}`);
    await page.getByRole('heading', { name: seeded.figure.title, exact: true }).waitFor();
    await page.getByText(new RegExp(`^${seeded.groupName} · `)).waitFor();
    await page.getByRole('img', { name: `Figure: ${seeded.figure.title}` }).waitFor();
    await page.getByText('1 layer is not public and is not drawn.', { exact: true }).waitFor();

    const pins = page.getByRole('list', { name: 'Result versions in this figure' });
    const pin = pins.getByRole('link', { name: `${seeded.figure.pinTitle}, version 2` });
    await pin.waitFor();
    expect(await pins.getByRole('listitem').count()).toBe(1);
    expect(await pins.getByText('Heron group-only dijet').count()).toBe(0);
    for (const name of ['SVG', 'PDF', 'PNG at 300 dpi', 'the drawn data as CSV']) await page.getByRole('link', { name: `${seeded.figure.title}: ${name}` }).waitFor();
    // The data download works for anyone (the public variant, without the hidden layer).
    const csv = (await page.evaluate(`fetch(${JSON.stringify(`/api/figures/${seeded.figure.id}/export.csv`)}).then((r) => r.text().then((t) => [r.status, t]))`)) as [number, string];
    expect(csv[0]).toBe(200);
    expect(csv[1]).not.toContain('Heron');

    await page.getByRole('button', { name: 'Cite version 1 of this figure', exact: true }).click();
    const bibtex = await page.getByRole('region', { name: 'Citation of version 1 of this figure' }).getByRole('textbox', { name: 'BibTeX text' }).inputValue();
    expect(bibtex).toContain(`url = {${e.base}/f/${seeded.figure.id}}`);
    expect(bibtex).toContain('title = {{Halcyon Ring Z′ limits, one column}}');
    await fullShot(page, vp, 'public-figure');

    await pin.click();
    await page.waitForURL(`**/r/${seeded.current.slug}/v2`);
    await page.getByRole('heading', { name: seeded.current.title, exact: true }).waitFor();
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
