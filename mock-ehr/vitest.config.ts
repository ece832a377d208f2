import { defineConfig } from 'vitest/config';

// Each test file starts its own mock EHR, which compiles the FHIR R4 schema first: on a busy
// shared machine that can take several seconds, hence the generous hook timeout.
export default defineConfig({
  test: { name: 'mock-ehr', include: ['src/**/*.test.ts', 'test/**/*.test.ts'], testTimeout: 30_000, hookTimeout: 60_000 },
});
