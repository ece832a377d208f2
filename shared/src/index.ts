export * from './schemas/common';
export * from './schemas/auth';
export * from './schemas/users';
export * from './schemas/audit';
export * from './schemas/ingest';
export * from './schemas/devices';
export * from './schemas/inbound';
export * from './schemas/assessments';
