/** Bindings the Worker gets from wrangler.toml; only api/ touches them. */
export interface Env {
  readonly DB: D1Database;
  readonly BLOBS: R2Bucket;
  /** The Worker's service binding to its own AnswerPart entrypoint, for fanned-out answers. */
  readonly PARTS?: { rowProducts(request: import('./query/answer-part.ts').PartRequest): Promise<import('./query/answer-part.ts').PartResult> };
  /** Answers estimated above this many products are split over parts (default 2,000,000). */
  readonly FANOUT_PRODUCTS_PER_PART?: string;
}

/** Per-request values set by the credential and principal middleware (api/auth). */
export interface RequestVars {
  /** The tenant the request acts on (an API key's tenant, or the principal's scope). */
  tenantId: string;
  credentialId: string;
  /** Set by requireRole: who calls an admin route. */
  principal: import('./auth/principal.ts').Principal;
  /** Set by requireRole: the tenant acted on, or null for an operator acting across tenants. */
  tenantScope: string | null;
  /** API keys: the dataset slugs the key may read, or null for every dataset of its tenant. */
  keyScope: readonly string[] | null;
  /** API keys: answered queries allowed per UTC month, or null for no limit. */
  monthlyQuota: number | null;
}

export interface AppBindings {
  Bindings: Env;
  Variables: RequestVars;
}
