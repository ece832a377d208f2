/**
 * The stack under test: the shared support module (`tests/src/support/stack.ts`: gateway + mock
 * EHR on a throwaway database). With EBBGATE_E2E_GATEWAY_URL (and EBBGATE_E2E_MOCK_EHR_URL) set,
 * the tests drive an already running stack instead (handy while working on the console).
 */
import { startStack } from '../support/stack';

export interface Stack {
  gatewayUrl: string;
  mockEhrUrl: string;
  stop(): Promise<void>;
}

export async function startE2eStack(): Promise<Stack> {
  const gatewayUrl = process.env.EBBGATE_E2E_GATEWAY_URL;
  if (gatewayUrl) {
    return { gatewayUrl: gatewayUrl.replace(/\/$/, ''), mockEhrUrl: (process.env.EBBGATE_E2E_MOCK_EHR_URL ?? '').replace(/\/$/, ''), stop: async () => {} };
  }
  return startStack();
}
