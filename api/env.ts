/** Bindings the Worker gets from wrangler.toml; only api/ touches them. */
export interface Env {
  readonly DB: D1Database;
  readonly BLOBS: R2Bucket;
  /** The Worker's service binding to its own AnswerPart entrypoint, for fanned-out answers. */
  readonly PARTS?: { rowProducts(request: import('./query/part-messages.ts').PartRequest): Promise<import('./query/part-messages.ts').PartResult> };
  /** Answers estimated above this many products are split over parts (default 2,000,000). */
  readonly FANOUT_PRODUCTS_PER_PART?: string;
  /** The build queue (producer side); api/builds/consume-builds.ts is its consumer. */
  readonly BUILDS: Queue<import('./builds/build-message.ts').BuildMessage>;
  /** Deliveries of one build message before its version is marked failed (default 3). */
  readonly BUILD_ATTEMPTS?: string;
  /** Delay before a failed build attempt is delivered again (default 30 s). */
  readonly BUILD_RETRY_DELAY_SECONDS?: string;
  /** How long a version that stopped being active still answers queries (default 900 s). */
  readonly VERSION_GRACE_SECONDS?: string;
  /** ISO 4217 code of the currency tariffs and statements are in (default EUR). */
  readonly BILLING_CURRENCY?: string;
  /** Days a proven modulus stays registered (default 30); clients rotate their keys sooner. */
  readonly MODULUS_LIFETIME_DAYS?: string;
  /** Modulus proofs checked per API key and UTC hour (default 600), and of those refused (default 20). */
  readonly MODULUS_PROOFS_PER_HOUR?: string;
  readonly MODULUS_REFUSED_PROOFS_PER_HOUR?: string;
}

/** Per-request values set by the credential and principal middleware (api/auth). */
export interface RequestVars {
  /** The tenant the request acts on (an API key's tenant, or the principal's scope). */
  tenantId: string;
  credentialId: string;
  /** Set by requireRole: who calls an admin route. */
  principal: import('./auth/principal-kind.ts').Principal;
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
