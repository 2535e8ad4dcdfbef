/** Plain catalogue objects that pages and islands receive. Isomorphic: types only. */
import type { PictureData } from './media';
import type { LengthUnit } from './print-grade';

export type Orientation = 'landscape' | 'portrait' | 'square';
export interface CaptureData {
  make?: string; model?: string; lens?: string;
  exposureTime?: number; fNumber?: number; iso?: number; focalLength?: number; takenAt?: string;
}

export interface WorkCard {
  id: number;
  slug: string;
  title: string;
  width: number;
  height: number;
  orientation: Orientation;
  series: { slug: string; title: string } | null;
  picture: PictureData;
}

export interface SeriesSummary {
  slug: string;
  title: string;
  description: string;
  workCount: number;
  cover: WorkCard | null;
}

export interface LicenceOption {
  tierId: number;
  slug: string;
  name: string;
  use: 'editorial' | 'commercial';
  summary: string;
  terms: string;
  media: string;
  cap: number | null;
  capUnit: string | null;
  territory: string;
  termMonths: number | null;
  /** null when the tier is withdrawn for this work. */
  price: number | null;
}

export interface SizeOption {
  sizeId: number;
  slug: string;
  label: string;
  unit: LengthUnit;
  width: number;
  height: number;
  edition: { kind: 'open' | 'limited'; total: number | null; artistProofs: number } | null;
  /** Offers at this size, one per paper; empty when the work is not offered at this size. */
  offers: { offerId: number; paperId: number; price: number }[];
}

export interface PaperOption {
  paperId: number;
  slug: string;
  name: string;
  surface: string;
  weightGsm: number;
  description: string;
}

export interface WorkDetail extends WorkCard {
  caption: string;
  keywords: string[];
  notes: string;
  capture: CaptureData;
  focal: { x: number; y: number };
  licences: LicenceOption[];
  sizes: SizeOption[];
  papers: PaperOption[];
}
