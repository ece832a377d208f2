import { defineConfig } from 'vitest/config';

// One run over every workspace; `scripts/test.ts` supplies the throwaway MariaDB through the env.
export default defineConfig({
  test: {
    projects: ['shared', 'gateway', 'mock-ehr', 'simulator', 'admin-ui', 'tests'],
  },
});
