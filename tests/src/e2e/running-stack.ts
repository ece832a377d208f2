/**
 * The stack under test. Normally started by the shared support module (`tests/src/support/stack.ts`,
 * `startStack()`: gateway + mock EHR on a throwaway database). With EBBGATE_E2E_GATEWAY_URL (and
 * EBBGATE_E2E_MOCK_EHR_URL) set, the tests drive an already running stack instead.
 */
export interface Stack { gatewayUrl: string; mockEhrUrl: string; stop(): Promise<void> }

export async function startE2eStack(): Promise<Stack> {
  const gatewayUrl = process.env.EBBGATE_E2E_GATEWAY_URL;
  if (gatewayUrl) {
    return { gatewayUrl: gatewayUrl.replace(/\/$/, ''), mockEhrUrl: (process.env.EBBGATE_E2E_MOCK_EHR_URL ?? '').replace(/\/$/, ''), stop: async () => {} };
  }
  // A computed specifier: the support module is owned by the test harness and may land later.
  const specifier = '../support/stack';
  const mod = (await import(/* @vite-ignore */ specifier)) as { startStack(): Promise<Stack> };
  return mod.startStack();
}
