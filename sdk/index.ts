export { connect, type ConnectOptions, type NearestResult, type NearestSite, type NearveilClient, type QueryCost } from './client.ts';
export { connectAdmin, type AdminOptions, type VersionInfo } from './admin.ts';
export { NearveilError } from './http.ts';
export type { PartitionRoundCost } from './partition-round.ts';
