export { connect, type ConnectOptions, type NearestOptions, type NearestResult, type NearestSite, type NearveilClient, type QueryCost } from './client.ts';
export { memorySealedCache, type DetailsCost, type SealedFileCache } from './details-round.ts';
export type { SiteRecord } from '../core/details/record-codec.ts';
export { connectAdmin, type AdminOptions, type VersionInfo } from './admin.ts';
export { NearveilError } from './http.ts';
export type { PartitionRoundCost } from './partition-round.ts';
export { generateKeyPair, type GenerateKeyPairOptions, type PirKeyPair } from '../core/pir/keys.ts';
export { DEFAULT_KEY_LIFETIME, memoryKeyStore, type ClientKeyStore, type KeyLifetime, type KeySetupCost, type StoredClientKey } from './client-key.ts';
export type { KeyReadyCost } from './key-keeper.ts';
