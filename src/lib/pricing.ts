/** Prices for licences and prints, always recomputed on the server from catalogue rows. */
import { applyBasisPoints, assertMinorUnits } from './money';

export type LicencePriceRule =
  | { mode: 'default' }
  | { mode: 'override'; price: number }
  | { mode: 'withdrawn' };

/** Price of a licence tier for one work: the tier's default, the work's override, or null when withdrawn. */
export function licencePrice(defaultPrice: number, rule: LicencePriceRule = { mode: 'default' }): number | null {
  assertMinorUnits(defaultPrice);
  switch (rule.mode) {
    case 'default':
      return defaultPrice;
    case 'override':
      assertMinorUnits(rule.price);
      return rule.price;
    case 'withdrawn':
      return null;
  }
}

export interface PrintPriceParts {
  /** The print size's base price in minor units. */
  sizeBasePrice: number;
  /** The paper's surcharge in basis points of the base price (2500 = +25 %). */
  paperSurchargeBp: number;
  /** Premium for a limited edition in basis points (0 for an open edition). */
  editionPremiumBp: number;
  /** The offer's own price, when the photographer set one; it replaces the computed price. */
  override?: number | null;
}

/** Price of one print: base × (1 + paper surcharge) × (1 + edition premium), unless overridden. */
export function printPrice(parts: PrintPriceParts): number {
  if (parts.override != null) {
    assertMinorUnits(parts.override);
    return parts.override;
  }
  assertMinorUnits(parts.sizeBasePrice);
  const withPaper = parts.sizeBasePrice + applyBasisPoints(parts.sizeBasePrice, parts.paperSurchargeBp);
  return withPaper + applyBasisPoints(withPaper, parts.editionPremiumBp);
}

export interface PricedLine { unitPrice: number; quantity: number }

export function lineSubtotal(line: PricedLine): number {
  assertMinorUnits(line.unitPrice);
  if (!Number.isInteger(line.quantity) || line.quantity < 1) throw new RangeError('quantity must be a positive integer');
  return line.unitPrice * line.quantity;
}
