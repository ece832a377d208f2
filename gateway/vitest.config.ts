import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: { globalSetup: ['../scripts/lib/vitest-global-setup.ts'], name: 'gateway', include: ['src/**/*.test.ts', 'test/**/*.test.ts'], testTimeout: 30_000 },
});
