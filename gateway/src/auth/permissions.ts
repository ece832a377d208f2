/** The permission table lives in @ebbgate/shared (the console derives its access map from it). */
export { PERMISSIONS, PUBLIC, allows, rolesWith, type Permission, type PrincipalKind } from '@ebbgate/shared';
