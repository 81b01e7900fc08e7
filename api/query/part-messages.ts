/** What the coordinator of a fanned-out answer sends each part over the service binding, and gets back. */
export interface PartRequest {
  /** Storage key of the matrix (content-addressed, so a part can never mix versions). */
  matrixKey: string;
  from: number;
  to: number;
  /** The query's modulus and its values for columns [from, to), in the query wire format. */
  query: Uint8Array;
}

export interface PartResult {
  /** Unblinded row products over the part's columns, in the answer wire format. */
  rows: Uint8Array;
  products: number;
}
