import { bitLength } from '../bigint/bit-length.ts';
import { bigintToBytes, bytesToBigint } from '../bigint/bytes.ts';
import { InputError } from '../errors/input-error.ts';
import type { ModulusProof } from '../modulus-proof/modulus-proof.ts';

// Binary bodies of a query and an answer; the layout is documented in WIRE.md next to this file.
// Header (10 bytes): 3 magic bytes, 1 version byte, u16 k (modulus byte width), u32 count.
// All integers big-endian; every big number is exactly k bytes.

/** Format version written and the only one read. */
export const WIRE_VERSION = 1;
/** Bytes before the first big number. */
export const WIRE_HEADER_BYTES = 10;
const QUERY_MAGIC = [0x4e, 0x56, 0x51] as const; // "NVQ"
const ANSWER_MAGIC = [0x4e, 0x56, 0x41] as const; // "NVA"
const PROOF_MAGIC = [0x4e, 0x56, 0x50] as const; // "NVP"
/** Big numbers of a modulus proof before its roots: n, c, d. */
const PROOF_HEAD_NUMBERS = 3;
const MAX_WIDTH = 0xffff;
const MAX_COUNT = 0xffffffff;

function modulusBytes(fn: string, modulusBits: number): number {
  if (!Number.isSafeInteger(modulusBits) || modulusBits < 1 || modulusBits > MAX_WIDTH * 8) {
    throw new RangeError(`${fn}: expected integer modulusBits in [1, ${MAX_WIDTH * 8}], got ${modulusBits}`);
  }
  return Math.ceil(modulusBits / 8);
}

function checkCount(fn: string, name: string, count: number): void {
  if (!Number.isSafeInteger(count) || count < 1 || count > MAX_COUNT) {
    throw new RangeError(`${fn}: expected integer ${name} in [1, ${MAX_COUNT}], got ${count}`);
  }
}

/** Size in bytes of an encoded query: header, n, then one k-byte value per column. */
export function queryByteLength(modulusBits: number, columns: number): number {
  checkCount('queryByteLength', 'columns', columns);
  return WIRE_HEADER_BYTES + modulusBytes('queryByteLength', modulusBits) * (columns + 1);
}

/** Size in bytes of an encoded answer: header, then one k-byte value per row. */
export function answerByteLength(modulusBits: number, rows: number): number {
  checkCount('answerByteLength', 'rows', rows);
  return WIRE_HEADER_BYTES + modulusBytes('answerByteLength', modulusBits) * rows;
}

function writeHeader(out: Uint8Array, magic: readonly number[], k: number, count: number): void {
  out.set(magic, 0);
  out[3] = WIRE_VERSION;
  const view = new DataView(out.buffer, out.byteOffset, out.byteLength);
  view.setUint16(4, k);
  view.setUint32(6, count);
}

function writeNumbers(out: Uint8Array, offset: number, k: number, numbers: readonly bigint[]): void {
  for (let i = 0; i < numbers.length; i++) out.set(bigintToBytes(numbers[i]!, k), offset + i * k);
}

/**
 * Encodes a query with k = byte width of n. Throws RangeError when n < 1, the count is 0 or above
 * 2^32 - 1, or a value is negative or does not fit in k bytes (ranges modulo n are not checked
 * here: that is validateQuery's job on the server).
 */
export function encodeQuery(n: bigint, values: readonly bigint[]): Uint8Array<ArrayBuffer> {
  if (typeof n !== 'bigint' || n < 1n) throw new RangeError(`encodeQuery: expected bigint modulus >= 1, got ${String(n)}`);
  checkCount('encodeQuery', 'value count', values.length);
  const k = modulusBytes('encodeQuery', bitLength(n));
  const out = new Uint8Array(WIRE_HEADER_BYTES + k * (values.length + 1));
  writeHeader(out, QUERY_MAGIC, k, values.length);
  out.set(bigintToBytes(n, k), WIRE_HEADER_BYTES);
  writeNumbers(out, WIRE_HEADER_BYTES + k, k, values);
  return out;
}

/**
 * Encodes an answer with k bytes per row (k = the query's modulus byte width). Throws RangeError
 * when k is not in [1, 65535], there are no rows, or a row is negative or does not fit in k bytes.
 */
export function encodeAnswer(k: number, rows: readonly bigint[]): Uint8Array<ArrayBuffer> {
  if (!Number.isSafeInteger(k) || k < 1 || k > MAX_WIDTH) throw new RangeError(`encodeAnswer: expected integer k in [1, ${MAX_WIDTH}], got ${k}`);
  checkCount('encodeAnswer', 'row count', rows.length);
  const out = new Uint8Array(WIRE_HEADER_BYTES + k * rows.length);
  writeHeader(out, ANSWER_MAGIC, k, rows.length);
  writeNumbers(out, WIRE_HEADER_BYTES, k, rows);
  return out;
}

function wireError(message: string): InputError {
  return new InputError('wire_format', 'body', `body: ${message}`);
}

/**
 * Reads and checks a header; returns k and the count. The expected total length is computed from
 * the header and compared with the body length before anything else is allocated.
 */
const COUNTED = { Query: 'value', Answer: 'row', Proof: 'root' } as const;

function readHeader(bytes: Uint8Array, magic: readonly number[], label: keyof typeof COUNTED, extraNumbers: number): { k: number; count: number } {
  if (!(bytes instanceof Uint8Array)) throw new TypeError(`decode${label}: expected Uint8Array, got ${typeof bytes}`);
  if (bytes.length < WIRE_HEADER_BYTES) {
    throw wireError(`expected at least ${WIRE_HEADER_BYTES} header bytes for a ${label.toLowerCase()}, got ${bytes.length}`);
  }
  const tag = String.fromCharCode(...magic);
  if (bytes[0] !== magic[0] || bytes[1] !== magic[1] || bytes[2] !== magic[2]) {
    throw wireError(`expected magic "${tag}" for a ${label.toLowerCase()}, got bytes ${hex(bytes.subarray(0, 3))}`);
  }
  if (bytes[3] !== WIRE_VERSION) throw wireError(`expected format version ${WIRE_VERSION}, got ${bytes[3]}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const k = view.getUint16(4);
  const count = view.getUint32(6);
  if (k === 0) throw wireError('expected a modulus byte width >= 1, got 0');
  if (count === 0) throw wireError(`expected a ${COUNTED[label]} count >= 1, got 0`);
  const expected = WIRE_HEADER_BYTES + k * (count + extraNumbers);
  if (bytes.length !== expected) {
    throw wireError(`expected ${expected} bytes for width ${k} and count ${count}, got ${bytes.length}`);
  }
  return { k, count };
}

function hex(bytes: Uint8Array): string {
  return Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join(' ');
}

function readNumbers(bytes: Uint8Array, offset: number, k: number, count: number): bigint[] {
  const out = new Array<bigint>(count);
  for (let i = 0; i < count; i++) out[i] = bytesToBigint(bytes.subarray(offset + i * k, offset + (i + 1) * k));
  return out;
}

/**
 * Decodes a query body. Throws InputError `wire_format` (field "body") for a short body, wrong
 * magic, unknown version, zero width or count, or a length that differs from what the header
 * implies; allocation is bounded by the body length. Values are not range-checked here.
 */
export function decodeQuery(bytes: Uint8Array): { n: bigint; values: bigint[] } {
  const { k, count } = readHeader(bytes, QUERY_MAGIC, 'Query', 1);
  const n = bytesToBigint(bytes.subarray(WIRE_HEADER_BYTES, WIRE_HEADER_BYTES + k));
  return { n, values: readNumbers(bytes, WIRE_HEADER_BYTES + k, k, count) };
}

/**
 * The modulus of a query body alone, after the same header checks as decodeQuery: the server
 * checks that the modulus was proven before it reads a single value.
 */
export function decodeQueryModulus(bytes: Uint8Array): bigint {
  const { k } = readHeader(bytes, QUERY_MAGIC, 'Query', 1);
  return bytesToBigint(bytes.subarray(WIRE_HEADER_BYTES, WIRE_HEADER_BYTES + k));
}

/** Decodes an answer body; the same checks and errors as decodeQuery. */
export function decodeAnswer(bytes: Uint8Array): { modulusBytes: number; rows: bigint[] } {
  const { k, count } = readHeader(bytes, ANSWER_MAGIC, 'Answer', 0);
  return { modulusBytes: k, rows: readNumbers(bytes, WIRE_HEADER_BYTES, k, count) };
}

/** Size in bytes of an encoded modulus proof: header, n, c, d, then one k-byte root per challenge. */
export function proofByteLength(modulusBits: number, roots: number): number {
  checkCount('proofByteLength', 'roots', roots);
  return WIRE_HEADER_BYTES + modulusBytes('proofByteLength', modulusBits) * (roots + PROOF_HEAD_NUMBERS);
}

/**
 * Encodes a modulus proof (core/modulus-proof) with k = byte width of n. Throws RangeError when
 * n < 1, there are no roots, or c, d or a root is negative or does not fit in k bytes.
 */
export function encodeModulusProof(proof: ModulusProof): Uint8Array<ArrayBuffer> {
  const { n, c, d, roots } = proof;
  if (typeof n !== 'bigint' || n < 1n) throw new RangeError(`encodeModulusProof: expected bigint modulus >= 1, got ${String(n)}`);
  checkCount('encodeModulusProof', 'root count', roots.length);
  const k = modulusBytes('encodeModulusProof', bitLength(n));
  const out = new Uint8Array(WIRE_HEADER_BYTES + k * (roots.length + PROOF_HEAD_NUMBERS));
  writeHeader(out, PROOF_MAGIC, k, roots.length);
  writeNumbers(out, WIRE_HEADER_BYTES, k, [n, c, d, ...roots]);
  return out;
}

/** Decodes a modulus proof body; the same checks and errors as decodeQuery. Nothing is verified here. */
export function decodeModulusProof(bytes: Uint8Array): ModulusProof {
  const { k, count } = readHeader(bytes, PROOF_MAGIC, 'Proof', PROOF_HEAD_NUMBERS);
  const [n, c, d, ...roots] = readNumbers(bytes, WIRE_HEADER_BYTES, k, count + PROOF_HEAD_NUMBERS);
  return { n: n!, c: c!, d: d!, roots };
}

/**
 * Numbers as they lie in a wire body: `count` big-endian numbers of `width` bytes, the first at
 * `offset` in `bytes`. The server's answer path reads query values and writes answer rows in this
 * form, straight into and out of its product engine, never as BigInt or hex.
 */
export interface WireNumbers {
  readonly bytes: Uint8Array;
  readonly offset: number;
  readonly width: number;
  readonly count: number;
}

/** The bytes of number i of `numbers` (a view, no copy). RangeError outside [0, count). */
export function wireNumberAt(numbers: WireNumbers, i: number): Uint8Array {
  if (!Number.isSafeInteger(i) || i < 0 || i >= numbers.count) throw new RangeError(`wireNumberAt: expected index in [0, ${numbers.count}), got ${i}`);
  const at = numbers.offset + i * numbers.width;
  return numbers.bytes.subarray(at, at + numbers.width);
}

/** numbers[from, to) as their own view (a part of a fanned-out answer gets its columns this way). */
export function sliceWireNumbers(numbers: WireNumbers, from: number, to: number): WireNumbers {
  if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to) || from < 0 || to < from || to > numbers.count) {
    throw new RangeError(`sliceWireNumbers: expected 0 <= from <= to <= ${numbers.count}, got ${from}, ${to}`);
  }
  return { bytes: numbers.bytes, offset: numbers.offset + from * numbers.width, width: numbers.width, count: to - from };
}

/** The numbers as BigInts (for the reference engine and tests; the answer path never needs them). */
export function wireNumbersToBigints(numbers: WireNumbers): bigint[] {
  return Array.from({ length: numbers.count }, (_, i) => bytesToBigint(wireNumberAt(numbers, i)));
}

/**
 * A query body read without making a BigInt per value: its modulus and its values in place.
 * The same checks and errors as decodeQuery.
 */
export function decodeQueryWire(bytes: Uint8Array): { n: bigint; values: WireNumbers } {
  const { k, count } = readHeader(bytes, QUERY_MAGIC, 'Query', 1);
  const n = bytesToBigint(bytes.subarray(WIRE_HEADER_BYTES, WIRE_HEADER_BYTES + k));
  return { n, values: { bytes, offset: WIRE_HEADER_BYTES + k, width: k, count } };
}

/**
 * An answer body of `rows` rows of width k with its header written, and the place its rows go
 * (an engine writes them there with getManyWire).
 */
export function answerBody(k: number, rows: number): { body: Uint8Array<ArrayBuffer>; rows: WireNumbers } {
  if (!Number.isSafeInteger(k) || k < 1 || k > MAX_WIDTH) throw new RangeError(`answerBody: expected integer k in [1, ${MAX_WIDTH}], got ${k}`);
  checkCount('answerBody', 'row count', rows);
  const body = new Uint8Array(WIRE_HEADER_BYTES + k * rows);
  writeHeader(body, ANSWER_MAGIC, k, rows);
  return { body, rows: { bytes: body, offset: WIRE_HEADER_BYTES, width: k, count: rows } };
}

/** An answer body's rows in place, after the checks of decodeAnswer. */
export function decodeAnswerWire(bytes: Uint8Array): WireNumbers {
  const { k, count } = readHeader(bytes, ANSWER_MAGIC, 'Answer', 0);
  return { bytes, offset: WIRE_HEADER_BYTES, width: k, count };
}

/** A query body of modulus n and the given values (already in place as wire numbers of n's width). */
export function queryBodyOf(n: bigint, values: WireNumbers): Uint8Array<ArrayBuffer> {
  const k = modulusBytes('queryBodyOf', bitLength(n));
  if (values.width !== k) throw new RangeError(`queryBodyOf: expected values of ${k} bytes, got ${values.width}`);
  checkCount('queryBodyOf', 'value count', values.count);
  const out = new Uint8Array(WIRE_HEADER_BYTES + k * (values.count + 1));
  writeHeader(out, QUERY_MAGIC, k, values.count);
  out.set(bigintToBytes(n, k), WIRE_HEADER_BYTES);
  out.set(values.bytes.subarray(values.offset, values.offset + k * values.count), WIRE_HEADER_BYTES + k);
  return out;
}
