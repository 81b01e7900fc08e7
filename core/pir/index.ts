export { answerMultiplications, answerQuery } from './answer.ts';
export { choosePlan, planProducts, type AnswerPlan, type PlanChoice } from './answer-plan.ts';
export { decodeRows } from './decode.ts';
export { splitColumns, type ColumnPart } from './fan-out.ts';
export { mineMatrix, minedProducts, type MinedPlan } from './mined-plan.ts';
export { answerWithPlan, combineParts, unblindedRowProducts } from './planned-answer.ts';
export { createBigIntEngine, type ProductEngine } from './product-engine.ts';
export {
  assembleKeyPair,
  findNonResidue,
  generateKeyPair,
  keyPairFromJson,
  keyPairToJson,
  type GenerateKeyPairOptions,
  type PirKeyPair,
  type PirKeyPairJson,
} from './keys.ts';
export { ALLOWED_MODULUS_BITS, DEFAULT_MODULUS_BITS, isAllowedModulusBits, type ModulusBits } from './params.ts';
export { makeQuery } from './query.ts';
export { validateQuery } from './validate.ts';
export {
  answerByteLength,
  decodeAnswer,
  decodeQuery,
  encodeAnswer,
  encodeQuery,
  queryByteLength,
  WIRE_HEADER_BYTES,
  WIRE_VERSION,
} from './wire.ts';
