import { NearveilError } from '../../sdk/browser.ts';

/**
 * A refusal or failure in plain words for the person searching, with what they can do about it.
 * Codes are the API's (api/http/error-codes.ts) plus the browser-key ones the Worker adds
 * (origin_not_allowed, rate_limited).
 */
export function errorText(err: unknown): string {
  if (!(err instanceof NearveilError)) {
    return 'Something went wrong on this page, so the search did not finish. Reload the page and try again.';
  }
  switch (err.code) {
    case 'rate_limited': {
      const seconds = err.retryAfterSeconds === null ? null : Math.max(1, Math.ceil(err.retryAfterSeconds));
      return seconds === null
        ? 'Too many searches from this device just now. Wait a minute, then try again.'
        : `Too many searches from this device just now. Try again in ${seconds} ${seconds === 1 ? 'second' : 'seconds'}.`;
    }
    case 'quota_exceeded':
      return 'This list has reached its limit of searches for this month, so it cannot answer now. Please try again later, or contact the organisation that publishes it.';
    case 'registration_throttled':
      return 'Too many devices set up private keys with this list in the last hour. Please try again later.';
    case 'origin_not_allowed':
      return 'This list cannot be searched from this web address: its publisher has not allowed it here. Please use the link the publisher gives.';
    case 'unreachable':
      return 'The search service could not be reached. Check your internet connection, then try again.';
    case 'credential_unknown':
    case 'credential_revoked':
    case 'credential_missing':
    case 'key_scope':
      return 'This page is no longer allowed to search this list. The organisation that publishes it needs to fix the page.';
    case 'dataset_unknown':
    case 'dataset_deleted':
    case 'no_active_version':
    case 'version_not_served':
      return 'This list is not available for searching right now. Please try again later.';
  }
  if (err.status === 402) return 'This list cannot answer searches right now because of its account limits. Please try again later, or contact the organisation that publishes it.';
  if (err.status === 429) return 'The search service is busy with this device or this list just now. Wait a minute, then try again.';
  if (err.status >= 500) return 'The search service had a problem and did not answer. Try again in a moment.';
  return `The search did not work (${err.code}). Please try again later.`;
}
