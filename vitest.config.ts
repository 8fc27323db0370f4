import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const src = (p: string) => fileURLToPath(new URL(p, import.meta.url));

export default defineConfig({
  resolve: {
    alias: [
      { find: /^@subgauge\/core\/node$/, replacement: src('./packages/core/src/node.ts') },
      { find: /^@subgauge\/core$/, replacement: src('./packages/core/src/index.ts') },
    ],
  },
  test: {
    // CI asks for a JSON report too (SUBGAUGE_TEST_JSON=path) so .ci/run can print "N passed, N failed".
    reporters: process.env.SUBGAUGE_TEST_JSON ? ['default', 'json'] : ['default'],
    outputFile: process.env.SUBGAUGE_TEST_JSON ? { json: process.env.SUBGAUGE_TEST_JSON } : {},
    include: ['packages/*/test/**/*.test.ts', 'test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
