/** Bindings the Worker gets from wrangler.toml; only api/ touches them. */
export interface Env {
  readonly DB: D1Database;
  readonly BLOBS: R2Bucket;
}

/** Per-request values set by the credential middleware. */
export interface RequestVars {
  tenantId: string;
  credentialId: string;
}

export interface AppBindings {
  Bindings: Env;
  Variables: RequestVars;
}
