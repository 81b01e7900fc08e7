/**
 * Refusal codes (api/http/error-codes.ts) in words a provider reads when an app reports failures.
 * Only codes that can refuse a request made with an API key are here; any other shows as its code.
 */
const REASONS: Readonly<Record<string, string>> = {
  rate_limited: 'Too many requests from one visitor (over the key’s rate a minute)',
  origin_not_allowed: 'Sent from a web page whose origin the key does not list',
  origin_missing: 'A web-page key used outside a web page (no origin sent)',
  server_key_in_page: 'A server key used from a web page',
  quota_exceeded: 'The key’s monthly quota was used up',
  key_scope: 'The key may not read this dataset',
  registration_throttled: 'Too many encryption-key checks from this key this hour',
  modulus_unproven: 'The app’s encryption key was not checked first (or its check expired)',
  modulus_proof: 'The app’s encryption-key check did not hold',
  modulus_even: 'Malformed query: the encryption key is even',
  modulus_size: 'Malformed query: the encryption key has the wrong size',
  value_jacobi: 'Malformed query: a value fails the Jacobi symbol check',
  value_range: 'Malformed query: a value is out of range',
  value_count: 'Malformed query: the wrong number of values',
  wire_format: 'Malformed query: not in the query format',
  body_too_large: 'The request was too large',
  dataset_unknown: 'The dataset named does not exist',
  dataset_deleted: 'The dataset named was deleted',
  invalid_dataset: 'The dataset name in the address is malformed',
  no_active_version: 'The dataset has no published version',
  version_unknown: 'The version named does not exist',
  version_not_served: 'The version named no longer answers',
  invalid_version: 'The version in the address is malformed',
  manifest_gone: 'The version’s description is no longer kept',
  details_unavailable: 'The version has no site details',
  invalid_matrix: 'The app asked for a matrix that does not exist',
  no_partition_matrix: 'The app asked for a matrix this layout does not have',
  content_type: 'The request had the wrong content type',
  invalid_json: 'The request body was not JSON',
  invalid_body: 'The request body did not have the expected fields',
};

/** The reason in plain words; an unknown code is shown as it is, so nothing is hidden. */
export function refusalReason(code: string): string {
  return REASONS[code] ?? code;
}

/** The codes with words, for a check against the API's list of codes. */
export const WORDED_REFUSALS: readonly string[] = Object.keys(REASONS);
