import { lazy, type ComponentType } from 'react';
import type { Permission } from '@/lib/authorization';

export interface AppRoute {
  path: string;
  permission: Permission;
  component: ComponentType;
}

export function lazyNamed<T extends Record<string, unknown>>(load: () => Promise<T>, name: keyof T): ComponentType {
  return lazy(async () => ({ default: (await load())[name] as ComponentType }));
}
