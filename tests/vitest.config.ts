import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    name: 'tests',
    include: ['src/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    fileParallelism: false,
  },
});
