// ESLint: typescript-eslint's recommended rules, and the layering of DEVELOPERS.md checked by
// `no-restricted-imports` per folder (a violation fails `npm run lint`, which `npm test` runs).
import js from '@eslint/js';
import reactHooks from 'eslint-plugin-react-hooks';
import tseslint from 'typescript-eslint';

/** Import patterns of a project folder: through the `@/` alias or relative from any depth. */
const anyDepth = (name) => name.startsWith('.') ? [name, `${name}/**`] : [`@/${name}/**`, `@/${name}`, ...[1, 2, 3, 4].map((d) => `${'../'.repeat(d)}${name}/**`), ...[1, 2, 3, 4].map((d) => `${'../'.repeat(d)}${name}`)];

const restrict = (rules) => ({
  'no-restricted-imports': [
    'error',
    {
      patterns: rules.map(([names, message]) => ({ group: names.flatMap(anyDepth), message })),
      paths: rules.flatMap(([, message, packages = []]) => packages.map((name) => ({ name, message }))),
    },
  ],
});

/** Storage accounting: only server/services/storage.ts may import its SQL (the counter, the render cache's lock and eviction). */
const storageOnly = [['db/queries/storage'], 'Stored bytes are counted only through server/services/storage.ts (reserve, resize, release, reserveRenderCache): call it instead.'];

/** The services' layering (below routes and jobs, above the data layer). */
const servicesLayer = [['server/routes', 'server/jobs', 'app', 'components', 'hooks', 'scripts', '../routes', '../jobs'], 'Services never import routes, jobs (jobs call services) or the app.'];

export default tseslint.config(
  { ignores: ['node_modules/**', 'dist/**', 'tmp/**', '.data/**', '.expo/**', 'db/migrations/**', 'docs/**', 'coverage/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { ecmaVersion: 2023, sourceType: 'module', globals: { console: 'readonly', process: 'readonly', __dirname: 'readonly', require: 'readonly', module: 'readonly', setTimeout: 'readonly', clearTimeout: 'readonly', setInterval: 'readonly', clearInterval: 'readonly', Buffer: 'readonly', URL: 'readonly', fetch: 'readonly', performance: 'readonly', structuredClone: 'readonly' } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_', caughtErrors: 'none' }],
      '@typescript-eslint/no-require-imports': 'off',
      'no-undef': 'off', // TypeScript checks names
    },
  },
  {
    files: ['app/**/*.tsx', 'components/**/*.tsx', 'hooks/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: { 'react-hooks/rules-of-hooks': 'error', 'react-hooks/exhaustive-deps': 'error' },
  },
  // shared/: isomorphic, free of React, React Native, Express, PostgreSQL and of every other layer.
  {
    files: ['shared/**/*.{ts,tsx}'],
    rules: restrict([
      [['server', 'db', 'app', 'components', 'hooks', 'scripts'], 'shared/ imports only themes/ (the design tokens below it).', ['react', 'react-native', 'express', 'pg', 'drizzle-orm']],
    ]),
  },
  // themes/: design tokens and figure themes, the bottom layer: pure data, no imports of the project.
  { files: ['themes/**/*.{ts,tsx}'], rules: restrict([[['shared', 'server', 'db', 'app', 'components', 'hooks', 'scripts'], 'themes/ is the bottom layer (pure data): it imports no other folder of the project.', ['react', 'react-native']]]) },
  // The app: app → components → hooks → shared (and themes).
  { files: ['hooks/**/*.{ts,tsx}'], rules: restrict([[['server', 'db', 'app', 'components', 'scripts'], 'hooks/ sit below components/: they import shared/ and themes/ only.', ['pg', 'express', 'drizzle-orm']]]) },
  { files: ['components/**/*.{ts,tsx}'], rules: restrict([[['server', 'db', 'app', 'scripts'], 'components/ import hooks/, shared/ and themes/, never routes (app/) or the server.', ['pg', 'express', 'drizzle-orm']]]) },
  { files: ['app/**/*.{ts,tsx}'], rules: restrict([[['server', 'db', 'scripts'], 'app/ holds routes of the web app: no server code.', ['pg', 'express', 'drizzle-orm']]]) },
  // The data layer imports nothing from the server.
  {
    files: ['db/**/*.ts'],
    rules: restrict([
      [['server', 'app', 'components', 'hooks', 'scripts'], 'db/ is below the server: SQL and schema only (executor types live in db/).'],
      [['./storage', '../queries/storage'], storageOnly[1]],
    ]),
  },
  // Everything else under server/ and scripts/ (seed, figures, fakes, app.ts, worker.ts): storage only through its service.
  { files: ['server/**/*.ts', 'scripts/**/*.ts'], rules: restrict([storageOnly]) },
  // Server: routes → services → db/queries. Routes never talk SQL.
  {
    files: ['server/routes/**/*.ts'],
    rules: restrict([[['db', 'app', 'components', 'hooks', 'scripts'], 'Routes are thin: they call services (server/services), never the data layer.', ['pg', 'drizzle-orm']]]),
  },
  {
    files: ['server/services/**/*.ts'],
    rules: restrict([servicesLayer, storageOnly]),
  },
  // The storage accounting module is the one service that reaches its SQL.
  { files: ['server/services/storage.ts'], rules: restrict([servicesLayer]) },
  {
    files: ['server/jobs/**/*.ts'],
    rules: restrict([[['server/routes', 'app', 'components', 'hooks', 'scripts', '../routes'], 'Jobs never import routes or the app.'], storageOnly]),
  },
  {
    files: ['server/{access,auth,context,env,read-cache,session-cache}.ts', 'server/lib/**/*.ts', 'server/clients/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: ['./services', './services/**', './routes', './routes/**', '../services', '../services/**', '../routes', '../routes/**', ...['app', 'components', 'hooks', 'scripts'].flatMap(anyDepth)],
              message: 'Infrastructure (context, lib) does not import services or routes.',
            },
            { group: storageOnly[0].flatMap(anyDepth), message: storageOnly[1] },
          ],
        },
      ],
    },
  },
);
