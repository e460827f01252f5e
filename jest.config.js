// Jest projects: unit (pure code), api (supertest + real PostgreSQL), e2e (playwright-core + Debian's
// Chromium). `npm test` (scripts/test.ts) starts PostgreSQL and runs them; a single project can be
// run by hand with `npx jest --selectProjects unit` (api/e2e need TEST_DATABASE_URL, see DEVELOPERS.md).
const esmPackages = [
  'd3-[a-z-]+', 'internmap', 'better-auth', '@better-auth', 'better-call', 'jose', 'nanostores',
  '@noble', 'rou3', '@better-fetch', 'svg2pdf\\.js', '@exodus', '@asamuzakjp', '@csstools', 'parse5',
  'entities', 'defu', 'uncrypto', 'kysely', '@standard-schema', 'fast-check', 'pure-rand',
];
// Also reaches nested copies (jsdom keeps its own parse5 under jsdom/node_modules).
const esm = esmPackages.join('|');
const transformIgnorePatterns = [`node_modules/(?!(${esm})/)(?!.*node_modules/(${esm})/)`];
const base = {
  transform: { '\\.[cm]?[jt]sx?$': 'babel-jest' },
  transformIgnorePatterns,
  moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
  testEnvironment: 'node',
};
module.exports = {
  // CI machines have 2 cores shared by the test workers, PostgreSQL and the renderer processes: a
  // sign-up (scrypt) plus a few writes can pass 5 s there. Tests set longer limits where they need them.
  testTimeout: 30_000,
  projects: [
    { ...base, displayName: 'unit', testMatch: ['<rootDir>/tests/unit/**/*.test.ts'] },
    {
      displayName: 'components',
      preset: 'jest-expo',
      // d3-* ship ESM as .mjs, which the preset's transform does not cover (the quick plot uses them).
      transform: { '\\.mjs$': 'babel-jest' },
      transformIgnorePatterns: [
        // jest-expo's documented pattern plus the ESM-only packages above.
        `node_modules/(?!((jest-)?react-native|@react-native(-community)?)|expo(nent)?|@expo(nent)?/.*|@expo-google-fonts/.*|react-navigation|@react-navigation/.*|react-native-svg|${esmPackages.join('|')})`,
      ],
      moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
      testMatch: ['<rootDir>/tests/unit/**/*.test.tsx'],
    },
    { ...base, displayName: 'api', testMatch: ['<rootDir>/tests/api/**/*.test.ts'] },
    { ...base, displayName: 'e2e', testMatch: ['<rootDir>/tests/e2e/**/*.test.ts'] },
  ],
};
