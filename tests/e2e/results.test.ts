import type { Page } from 'playwright-core';
import { fullShot, newPage, pageErrors, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

const PASSWORD = 'a-long-test-password';

/**
 * An invented limit table as an analysis might export it: semicolons, decimal commas, headers in
 * its own words, a theory column, and two +1σ columns — the first (picked by auto-detection) has a
 * band edge below the median in line 5, the "rerun" column is right.
 */
const CSV = [
  "M_Z' [TeV];Obs. limit (fb);Exp -2σ;Exp. -1 sigma;Expected median;exp+1s;Exp +2σ;exp+1s (rerun);sigma_theory [fb]",
  '1,0;12,0;5,0;7,0;10,0;14,0;19,0;14,0;400',
  '2,0;3,1;1,2;1,7;2,4;3,3;4,5;3,3;60',
  '3,0;0,9;0,40;0,55;0,75;1,05;1,45;1,05;9,0',
  '4,0;0,50;0,21;0,29;0,40;0,38;0,78;0,56;1,4',
  '5,0;0,30;0,13;0,18;0,25;0,35;0,48;0,35;0,22',
  '6,0;0,26;0,10;0,14;0,19;0,27;0,37;0,27;0,035',
].join('\n');

async function signUp(page: Page, name: string, email: string) {
  await page.goto('/sign-up');
  await page.getByLabel('Your name').fill(name);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: 'Create account', exact: true }).click();
  await page.getByRole('region', { name: 'You are not in a group yet' }).waitFor();
}

/** The role picker of one file column (its name ends with the current role). */
const rolePicker = (page: Page, header: string) => page.getByRole('button', { name: new RegExp(`^Role of column “${header.replace(/[()+.[\]]/g, '\\$&')}”: `) });

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;
  const title = `Heavy vector search in dijets <b>${vp}</b>`;

  test('upload a CSV with unusual headers, fix the reported problem by remapping, publish, open the permanent link signed out', async () => {
    const { page: o, context } = await newPage(e, vp);
    await signUp(o, 'Ada Analyst', `analyst-${tag}@lab.example`);
    await o.getByRole('button', { name: 'Create a group', exact: true }).click();
    await o.getByLabel('Group name').fill(`Fictional Dijet Team ${vp}`);
    await o.getByRole('button', { name: 'Create group', exact: true }).click();
    await o.getByRole('heading', { name: 'Members', exact: true }).waitFor();

    // An empty registry says so, and offers the upload to a role that can write.
    await o.goto('/');
    await o.getByRole('region', { name: 'No results yet' }).waitFor();
    await fullShot(o, vp, 'results-empty');
    await o.getByRole('button', { name: 'Upload a result', exact: true }).click();
    await o.getByRole('heading', { name: 'Upload a result', exact: true }).waitFor();
    await fullShot(o, vp, 'upload-start');

    // The picker is expo-document-picker's hidden file input on the web. Too large a file is
    // refused before it is read, with the limit named.
    const tooBig = o.waitForEvent('filechooser');
    await o.getByRole('button', { name: 'Choose a file', exact: true }).click();
    await (await tooBig).setFiles({ name: 'everything.csv', mimeType: 'text/csv', buffer: Buffer.alloc(6 * 1024 * 1024, 'a') });
    await o.getByText('The file: is 6 MB; the limit is 5 MB', { exact: false }).waitFor();
    const chooser = o.waitForEvent('filechooser');
    await o.getByRole('button', { name: 'Choose another file', exact: true }).click();
    await (await chooser).setFiles({ name: 'zprime-dijet-limits.csv', mimeType: 'text/csv', buffer: Buffer.from(CSV, 'utf8') });
    await o.getByText('zprime-dijet-limits.csv').waitFor();

    // Auto-detected roles from the headers; the rerun column is left unused.
    await expect(rolePicker(o, "M_Z' [TeV]").getAttribute('aria-label')).resolves.toMatch(/: Parameter \(x\)$/);
    await expect(rolePicker(o, 'Obs. limit (fb)').getAttribute('aria-label')).resolves.toMatch(/: Observed limit$/);
    await expect(rolePicker(o, 'Exp -2σ').getAttribute('aria-label')).resolves.toMatch(/: Expected −2σ$/);
    await expect(rolePicker(o, 'exp+1s').getAttribute('aria-label')).resolves.toMatch(/: Expected \+1σ$/);
    await expect(rolePicker(o, 'exp+1s (rerun)').getAttribute('aria-label')).resolves.toMatch(/: Not used$/);
    await expect(rolePicker(o, 'sigma_theory [fb]').getAttribute('aria-label')).resolves.toMatch(/: Theory$/);
    // The parameter's name and unit, and σ×B in fb, come from the headers too.
    await expect(o.getByLabel('Parameter name', { exact: true }).inputValue()).resolves.toBe("M_Z'");
    await expect(o.getByLabel('Parameter unit', { exact: true }).inputValue()).resolves.toBe('TeV');

    // The unused rerun column holds numbers: the preview says it would not be stored.
    await o.getByText(/^Not used: “exp\+1s \(rerun\)” \(column 8\)\. It holds numbers but has no role/).waitFor();

    // The deliberate error is named by line and column, and Save stays disabled.
    const problem = o.getByText(/Line 5, column “exp\+1s”: expected median \(0\.4\) is above expected \+1σ \(0\.38\)/);
    await problem.waitFor();
    await expect(o.getByRole('button', { name: 'Save the result', exact: true }).getAttribute('aria-disabled')).resolves.toBe('true');
    await o.getByRole('img', { name: /^Plot of observed, expected median, ±1σ band, ±2σ band, theory/ }).waitFor();
    await fullShot(o, vp, 'upload-problem');

    // Fix it: the rerun column becomes the +1σ edge (the old column is then unused).
    await rolePicker(o, 'exp+1s (rerun)').click();
    await o.getByRole('radiogroup', { name: 'Role of column “exp+1s (rerun)”' }).getByRole('radio', { name: 'Expected +1σ', exact: true }).click();
    // The move is said, and the column left without a role is named; "all valid" is not claimed.
    await o.getByText('Expected +1σ moved from column “exp+1s” to column “exp+1s (rerun)”.').waitFor();
    await o.getByText(/^Not used: “exp\+1s” \(column 6\)\./).waitFor();
    await o.getByText('The 6 points of the columns with a role are valid.').waitFor();
    await expect(o.getByText('All 6 points are valid.').count()).resolves.toBe(0);
    await expect(problem.count()).resolves.toBe(0);
    await expect(rolePicker(o, 'exp+1s').getAttribute('aria-label')).resolves.toMatch(/: Not used$/);

    // Provenance, checked beside each field.
    await o.getByLabel('Title', { exact: true }).fill(title);
    await o.getByLabel('√s (TeV)', { exact: true }).fill('abc');
    await o.getByLabel('√s (TeV)', { exact: true }).blur();
    await o.getByText('Must be a number (TeV)').first().waitFor();
    await o.getByLabel('√s (TeV)', { exact: true }).fill('18');
    await o.getByLabel('Physics model', { exact: true }).fill('Sequential Z′ (invented), g = 0.25');
    await o.getByLabel('Integrated luminosity (fb⁻¹)', { exact: true }).fill('140');
    await o.getByRole('radiogroup', { name: 'Method' }).getByRole('radio', { name: 'Asymptotic CLs', exact: true }).click();
    await o.getByLabel('Reference', { exact: true }).fill('LF-EXO-2026-07');
    const save = o.getByRole('button', { name: 'Save the result', exact: true });
    await o.waitForFunction(() => !document.querySelector('[aria-label="Save the result"][aria-disabled="true"]'));
    await fullShot(o, vp, 'upload-ready');
    await save.click();

    // The result page of the new draft: the title is text (never markup), plot, table, derived numbers.
    await o.getByRole('heading', { name: title, exact: true }).waitFor();
    await o.getByLabel('State: Draft').first().waitFor();
    await o.getByRole('img', { name: /^Plot of observed/ }).waitFor();
    await o.getByRole('table', { name: 'Limit points' }).waitFor();
    await o.getByText(/^excluded: from below 1 to 4\.\d+ TeV$/).first().waitFor();
    await expect(o.locator('b').count()).resolves.toBe(0);
    await fullShot(o, vp, 'result-draft');

    // Publish as public; the permanent link appears.
    await o.getByRole('checkbox', { name: 'Make the result public' }).click();
    await o.getByRole('button', { name: 'Publish version 1', exact: true }).click();
    // Publishing is permanent: it asks first.
    await o.getByRole('alertdialog', { name: 'Publish version 1?' }).getByText(/This is permanent/).waitFor();
    await o.getByRole('button', { name: 'Publish now', exact: true }).click();
    const linkText = o.getByLabel('Permanent link address');
    await linkText.waitFor();
    await o.getByLabel('State: Published').first().waitFor();
    const permalink = (await linkText.textContent())!;
    expect(permalink).toMatch(new RegExp(`^${e.base}/r/[a-z0-9-]+/v1$`));
    await fullShot(o, vp, 'result-published');
    const resultUrl = o.url();

    // A second version from the project's own JSON (the download of v1): no mapping step, provenance
    // from the file, a note on what changed. Publishing it supersedes v1.
    const jsonHref = await o.getByRole('link', { name: 'Download version 1 as JSON', exact: true }).getAttribute('href');
    const exported = await o.request.get(jsonHref!);
    expect(exported.status()).toBe(200);
    const limitFile = JSON.parse(await exported.text());
    limitFile.meta.luminosity = 300;
    await o.getByRole('button', { name: 'Upload a new version', exact: true }).click();
    await o.getByRole('heading', { name: 'New version', exact: true }).waitFor();
    const chooser2 = o.waitForEvent('filechooser');
    await o.getByRole('button', { name: 'Choose a file', exact: true }).click();
    await (await chooser2).setFiles({ name: 'zprime-v2.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(limitFile)) });
    await o.getByText('All 6 points are valid.').waitFor();
    await expect(o.getByRole('heading', { name: 'Map the columns', exact: true }).count()).resolves.toBe(0);
    await expect(o.getByLabel('Integrated luminosity (fb⁻¹)', { exact: true }).inputValue()).resolves.toBe('300');
    await o.getByLabel('What changed in this version', { exact: true }).fill('Full dataset: 300 fb⁻¹');
    await fullShot(o, vp, 'upload-new-version');
    await o.getByRole('button', { name: 'Save the new version', exact: true }).click();
    await o.getByRole('button', { name: 'Version 2, draft, shown', exact: true }).waitFor();
    await o.getByRole('button', { name: 'Publish version 2', exact: true }).click();
    await o.getByRole('button', { name: 'Publish now', exact: true }).click();
    await o.getByLabel('Permanent link address').waitFor();
    await o.getByRole('button', { name: 'Version 1, superseded', exact: true }).click();
    await o.getByText('A newer version of this result has been published', { exact: false }).waitFor();

    // Retracting v2 asks for a reason, which everyone who opens it then reads.
    await o.getByRole('button', { name: 'Version 2, published', exact: true }).click();
    await o.getByRole('button', { name: 'Retract version 2', exact: true }).click();
    await o.getByRole('button', { name: 'Retract version 2', exact: true }).click();
    await o.getByText('Give a reason', { exact: false }).waitFor();
    await o.getByLabel('Reason for the retraction', { exact: true }).fill('The luminosity of the new dataset was applied twice');
    await o.getByRole('button', { name: 'Retract version 2', exact: true }).click();
    await o.getByText('This version was retracted: The luminosity of the new dataset was applied twice', { exact: false }).first().waitFor();
    await fullShot(o, vp, 'result-retracted');
    expect(o.url()).toContain(resultUrl.replace(e.base, '').split('?')[0]!);

    // The list shows it (table on wide screens, a card on phones); a search that matches nothing says so.
    await o.goto('/');
    // The list shows the newest version: v2, retracted.
    await o.getByRole('link', { name: `${title}, retracted, version 2`, exact: true }).waitFor();
    await fullShot(o, vp, 'results-list');
    await o.getByLabel('Search results', { exact: true }).fill('no-such-analysis');
    await o.getByRole('region', { name: 'No results match these filters' }).waitFor();
    await o.getByRole('button', { name: 'Clear filters', exact: true }).click();
    await o.getByRole('link', { name: `${title}, retracted, version 2`, exact: true }).waitFor();
    // Filters (behind a button on phones) go to the server with the query.
    if (vp === 'phone') await o.getByRole('button', { name: 'Filters and sort', exact: true }).click();
    await o.getByRole('button', { name: 'State: Any state', exact: true }).click();
    await o.getByRole('radiogroup', { name: 'State' }).getByRole('radio', { name: 'Draft', exact: true }).click();
    await o.getByRole('region', { name: 'No results match these filters' }).waitFor();
    await fullShot(o, vp, 'results-filtered');
    await o.getByRole('button', { name: 'State: Draft', exact: true }).click();
    await o.getByRole('radiogroup', { name: 'State' }).getByRole('radio', { name: 'Retracted', exact: true }).click();
    await o.getByRole('link', { name: `${title}, retracted, version 2`, exact: true }).waitFor();
    expect(o.url()).toContain('state=retracted');

    // API tokens: created once, shown once, revoked after confirmation.
    await o.goto('/account');
    await o.getByRole('link', { name: 'Manage API tokens', exact: true }).click();
    await o.getByRole('heading', { name: 'API tokens', exact: true }).waitFor();
    await o.getByLabel('Token name', { exact: true }).fill('dijet pipeline');
    await o.getByRole('button', { name: 'Create token', exact: true }).click();
    await o.getByText('Copy it now: you will not see it again.', { exact: false }).waitFor();
    await o.getByText('never used', { exact: false }).waitFor();
    await fullShot(o, vp, 'tokens');
    await o.getByRole('button', { name: 'Revoke dijet pipeline', exact: true }).click();
    await o.getByRole('button', { name: 'Confirm: revoke dijet pipeline', exact: true }).click();
    await o.getByRole('region', { name: 'No tokens' }).waitFor();

    // Signed out, in a fresh browser context: the permanent link shows the result and its downloads.
    const visitor = await newPage(e, vp);
    const v = visitor.page;
    await v.goto(permalink);
    await v.getByRole('heading', { name: title, exact: true }).waitFor();
    await v.getByRole('img', { name: /^Plot of observed/ }).waitFor();
    await v.getByRole('link', { name: 'Sign in', exact: true }).waitFor();
    const csv = v.getByRole('link', { name: 'Download version 1 as CSV', exact: true });
    const json = v.getByRole('link', { name: 'Download version 1 as JSON', exact: true });
    const csvHref = await csv.getAttribute('href');
    expect(csvHref).toMatch(/^\/api\/public\/results\/[a-z0-9-]+\/v1\/export\.csv$/);
    expect(await json.getAttribute('href')).toMatch(/\/export\.json$/);
    const download = await v.request.get(csvHref!);
    expect(download.status()).toBe(200);
    expect(await download.text()).toMatch(/^M_Z'|^"?M_Z'|observed/m);
    await fullShot(v, vp, 'permalink-signed-out');

    // The retracted v2 says why, to anyone.
    await v.goto(permalink.replace(/v1$/, 'v2'));
    await v.getByText('This version was retracted: The luminosity of the new dataset was applied twice', { exact: false }).first().waitFor();

    // A link that does not exist says so plainly.
    await v.goto('/r/no-such-result/v3');
    await v.getByRole('region', { name: 'Not found or not public' }).waitFor();

    // Public browsing from the sign-in screen.
    await v.goto('/sign-in');
    await v.getByRole('link', { name: 'Browse public results', exact: true }).click();
    await v.getByRole('heading', { name: 'Public results', exact: true }).waitFor();
    const listed = v.getByRole('link', { name: new RegExp(`^${title.replace(/[()+.[\]<>/]/g, '\\$&')}, `) });
    await listed.waitFor();
    await fullShot(v, vp, 'public-list');
    await listed.click();
    await v.getByRole('heading', { name: title, exact: true }).waitFor();

    expect(pageErrors(o)).toEqual([]);
    expect(pageErrors(v)).toEqual([]);
    await visitor.context.close();
    await context.close();
  });
});
