import { afterEach } from 'vitest';
import { cleanup } from '@testing-library/react';

// React 19 warns (and batches differently) unless the test environment declares act() support.
(globalThis as { IS_REACT_ACT_ENVIRONMENT?: boolean }).IS_REACT_ACT_ENVIRONMENT = true;

afterEach(() => cleanup());
