import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    globalSetup: ['../scripts/lib/vitest-global-setup.ts'],
    name: 'tests',
    include: ['src/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    fileParallelism: false,
  },
});
