import type { PlanRecord } from '../geo/manifest.ts';
import type { AnswerPlan, PlanChoice } from '../pir/answer-plan.ts';

export const planName = (p: AnswerPlan) => (p.kind === 'blocked' ? `blocked b=${p.blockColumns}` : p.kind);

/** The manifest's account of an answer plan: the choice, its products, and all plans weighed. */
export function planRecord(choice: PlanChoice): PlanRecord {
  const plainProducts = choice.weighed[0]!.products;
  const weighed = choice.weighed.map((w) => ({ plan: planName(w.plan), products: w.products }));
  const p = choice.plan;
  if (p.kind === 'blocked') return { kind: 'blocked', blockColumns: p.blockColumns, products: choice.products, plainProducts, weighed };
  if (p.kind === 'mined') return { kind: 'mined', rules: p.mined.rules.length, products: choice.products, plainProducts, weighed };
  return { kind: 'plain', products: choice.products, plainProducts, weighed };
}
