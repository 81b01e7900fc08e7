// The client package's main entry ("@nearveil/client"): the private query, its keys and cautions.
// Nothing here may reach a Node-only module, so one entry serves browsers and Node alike; the
// package build refuses any node: import it finds (scripts/build-client-package.ts).
export { connect, type ConnectOptions, type NearestOptions, type NearestResult, type NearestSite, type NearveilClient, type QueryCost } from './client.ts';
export { memorySealedCache, type DetailsCost, type SealedFileCache } from './details-round.ts';
export type { SiteRecord } from '../core/details/record-codec.ts';
export { NearveilError, type FetchLike } from './http.ts';
export type { PartitionRoundCost } from './partition-round.ts';
export { generateKeyPair, type GenerateKeyPairOptions, type PirKeyPair } from '../core/pir/keys.ts';
export { DEFAULT_KEY_LIFETIME, memoryKeyStore, type ClientKeyStore, type KeyLifetime, type KeySetupCost, type StoredClientKey } from './client-key.ts';
export type { KeyReadyCost } from './key-keeper.ts';
export { DEFAULT_KEY_DATABASE, indexedDbKeyStore, type IndexedDbKeyStoreOptions } from './browser-key-store.ts';
export { CAUTIONS, FAR_FROM_COVERAGE_CAUTION, type Caution, type CautionCode } from '../core/cautions/cautions.ts';
export type { Manifest } from '../core/geo/manifest.ts';
