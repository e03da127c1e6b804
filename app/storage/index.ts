export * from './records.ts';
export { createSessionStore, StorageError, isQuotaError, type StorageFailure, type SessionCopy, type KeyValue, type SessionStore, type SessionSummary, type Listing, type AsideRecord } from './store.ts';
export { createSaver, type Saver, type SaverOptions } from './saver.ts';
export { exportBackup, importBackup, BackupError, bytesToBase64, base64ToBytes, type ImportReport } from './backup.ts';
export { browserKeyValue } from './idb.ts';
export { createSetupStore, SETUP_PREFIX, type SetupStore, type SetupListing } from './setups.ts';
