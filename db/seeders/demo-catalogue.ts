/**
 * The demo shop: an invented still-life photographer, their series and works, licence tiers,
 * print sizes and papers. Everything here is our own invention and is used only by the demo seed.
 */
import { isoA } from '../../src/lib/paper-sizes';

export const DEMO_SETTINGS = {
  shopName: 'Orla Kestrel · Still Life',
  photographerName: 'Orla Kestrel',
  tagline: 'Studio still lifes of glass, fruit, small tools and shells — licensed for print and screen, or printed to hang.',
  currency: 'GBP',
  targetPpi: 300,
  floorPpi: 240,
  wallFloorPpi: 150,
  viewingDistanceFactor: 1.5,
  watermarkText: '© Orla Kestrel · preview',
  limitedEditionPremiumBp: 2000,
};

export const DEMO_SERIES = [
  { slug: 'glass-and-water', title: 'Glass and Water', description: 'Vessels, bottles and the light that bends through them, shot on a black acrylic table under one large softbox.' },
  { slug: 'orchard-hours', title: 'Orchard Hours', description: 'Pears, quinces, figs and lemons from a late-summer market, on slate and linen.' },
  { slug: 'small-tools', title: 'Small Tools', description: 'Workshop objects with long lives: a brass scale, thread spools, keys, a plumb bob.' },
  { slug: 'shells-at-dusk', title: 'Shells at Dusk', description: 'Shells and eggs against a warm graded backdrop, lit low to find their ridges.' },
];

export const DEMO_TIERS = [
  {
    slug: 'editorial-digital', name: 'Editorial · Digital', use: 'editorial' as const,
    summary: 'One online article or feature.',
    terms: 'You may use the picture in one editorial article, review or feature published online (a news site, a digital magazine, a blog), including its social posts that link to it. Not for advertising, sponsored content, or anything that suggests the photographer endorses a product.',
    media: 'Web and apps (editorial)', cap: 500000, capUnit: 'page views', territory: 'Worldwide', termMonths: 24, defaultPrice: 12000,
  },
  {
    slug: 'editorial-print-run', name: 'Editorial · Print run', use: 'editorial' as const,
    summary: 'A book, magazine or newspaper in print.',
    terms: 'You may print the picture inside one editorial publication — a book, a magazine issue or a newspaper — up to the print run below, plus its digital edition. Not on the cover unless agreed, not in advertising, and no endorsement implied.',
    media: 'Print publication, inside pages (editorial)', cap: 50000, capUnit: 'copies', territory: 'Worldwide', termMonths: 60, defaultPrice: 18000,
  },
  {
    slug: 'commercial-web', name: 'Commercial · Web', use: 'commercial' as const,
    summary: 'A brand’s own website, newsletter and social channels.',
    terms: 'You may use the picture to present your business on your own website, e-mail newsletters and organic social posts. Paid advertising, packaging and print are not included. The picture may be cropped but not otherwise altered.',
    media: 'Owned web and social channels', cap: 1000000, capUnit: 'impressions', territory: 'Worldwide', termMonths: 12, defaultPrice: 45000,
  },
  {
    slug: 'commercial-campaign', name: 'Commercial · Campaign', use: 'commercial' as const,
    summary: 'Advertising across print, outdoor and paid digital.',
    terms: 'You may use the picture in one advertising campaign in the country you name: print adverts, posters, point of sale, paid social and display adverts, up to the print run below for printed pieces. Packaging, exclusivity and other countries need a custom quote.',
    media: 'Advertising: print, outdoor, paid digital', cap: 250000, capUnit: 'printed copies', territory: 'One country', termMonths: 12, defaultPrice: 140000,
  },
];

const a = (n: number) => isoA(n);
export const DEMO_SIZES = [
  { slug: 'a4', label: 'A4', family: 'iso-a' as const, unit: 'mm' as const, ...a(4), basePrice: 6500 },
  { slug: 'a3', label: 'A3', family: 'iso-a' as const, unit: 'mm' as const, ...a(3), basePrice: 9500 },
  { slug: 'a2', label: 'A2', family: 'iso-a' as const, unit: 'mm' as const, ...a(2), basePrice: 16000 },
  { slug: '8x10', label: '8 × 10 in', family: 'inch' as const, unit: 'in' as const, width: 8, height: 10, basePrice: 6000 },
  { slug: '11x14', label: '11 × 14 in', family: 'inch' as const, unit: 'in' as const, width: 11, height: 14, basePrice: 9000 },
  { slug: '12x18', label: '12 × 18 in', family: 'inch' as const, unit: 'in' as const, width: 12, height: 18, basePrice: 12000 },
  { slug: '16x20', label: '16 × 20 in', family: 'inch' as const, unit: 'in' as const, width: 16, height: 20, basePrice: 18000 },
  { slug: '20x30', label: '20 × 30 in', family: 'inch' as const, unit: 'in' as const, width: 20, height: 30, basePrice: 29000 },
  { slug: '24x36', label: '24 × 36 in', family: 'inch' as const, unit: 'in' as const, width: 24, height: 36, basePrice: 39000 },
];

/** Limited editions at the larger sizes; the rest are open. */
export const DEMO_EDITIONS: Record<string, { total: number; artistProofs: number }> = {
  '16x20': { total: 25, artistProofs: 2 },
  '20x30': { total: 10, artistProofs: 1 },
  '24x36': { total: 5, artistProofs: 0 }, // proofs ≤ 10 % of N (common practice): none for five
};

export const DEMO_PAPERS = [
  { slug: 'cotton-rag-matte', name: 'Cotton rag, matte', surface: 'Matte, lightly textured', weightGsm: 310, surchargeBp: 0,
    description: '100 % cotton, acid-free, no optical brighteners. Soft blacks and a paper-like feel.' },
  { slug: 'baryta-satin', name: 'Baryta, satin', surface: 'Satin', weightGsm: 315, surchargeBp: 1500,
    description: 'Fibre base with a baryta layer: deep blacks and a gentle sheen, closest to a darkroom print.' },
];

const studioCamera = { make: 'Stillmark Demo Optics', model: 'SD-1 (generated)', lens: '90 mm 1:2.8 Macro (generated)' };
const flashNote =
  'Lit with two studio flash heads. Studio flash stores a high voltage even when switched off: let the heads cool, unplug them before changing tubes or modelling lamps, and follow the maker’s manual and your local electrical codes.';

export interface DemoWork {
  slug: string; title: string; series: string; width: number; height: number;
  caption: string; altText: string; keywords: string[]; notes?: string;
  focal?: { x: number; y: number };
  capture: { make: string; model: string; lens: string; exposureTime: string; fNumber: number; iso: number; focalLength: number; takenAt: string };
  status?: 'draft' | 'published';
  /** Tier slugs withdrawn for this work, e.g. when a release is missing. */
  withdrawn?: string[];
  overrides?: Record<string, number>;
  propertyRelease?: string;
}

const shot = (takenAt: string, exposureTime = '1/125', fNumber = 11, focalLength = 90) =>
  ({ ...studioCamera, exposureTime, fNumber, iso: 100, focalLength, takenAt });

export const DEMO_WORKS: DemoWork[] = [
  { slug: 'carafe-amber-hour', title: 'Carafe, Amber Hour', series: 'glass-and-water', width: 6000, height: 4000,
    caption: 'A hand-blown carafe and a small tumbler of amber tea, glowing against a warm backdrop.',
    altText: 'A round glass carafe half full of amber liquid beside a small tumbler, on a glossy dark table with an amber glow behind and reflections below.',
    keywords: ['glass', 'carafe', 'tea', 'amber', 'reflection', 'warm light'], capture: shot('2026-02-11T10:14:22'), notes: flashNote,
    overrides: { 'commercial-campaign': 160000 } },
  { slug: 'two-tumblers', title: 'Two Tumblers', series: 'glass-and-water', width: 4000, height: 6000,
    caption: 'Two heavy tumblers, one empty and one with a finger of water, leaning light into each other.',
    altText: 'Two clear glass tumblers side by side, one empty and one with water, on a reflective dark table against a grey backdrop.',
    keywords: ['glass', 'tumbler', 'pair', 'teal', 'reflection'], capture: shot('2026-02-11T11:02:40', '1/160', 13) },
  { slug: 'blue-bottle-long-shadow', title: 'Blue Bottle, Long Shadow', series: 'glass-and-water', width: 6000, height: 4000,
    caption: 'A cobalt medicine bottle with its shadow stretched to the edge of the frame.',
    altText: 'A slim cobalt-blue glass bottle on a pale grey-green table with a long soft shadow to the right.',
    keywords: ['glass', 'bottle', 'blue', 'cobalt', 'shadow'], capture: shot('2026-02-12T09:40:05', '1/125', 16) },
  { slug: 'water-line', title: 'Water Line', series: 'glass-and-water', width: 6000, height: 3375, focal: { x: 0.42, y: 0.55 },
    caption: 'A flask, a tall glass and a jar holding water at different heights, a wide frame for a wide table.',
    altText: 'Three clear glass vessels holding water at different levels on a dark teal table, in a wide frame.',
    keywords: ['glass', 'water', 'row', 'panoramic', 'wide'], capture: shot('2026-02-12T14:25:51', '1/125', 11, 60) },
  { slug: 'decanter-study', title: 'Decanter Study', series: 'glass-and-water', width: 4000, height: 6000,
    caption: 'A ribbed, stoppered decanter holding a little whisky, against a cool grey backdrop.',
    altText: 'A round ribbed glass decanter with a ball stopper, a little amber liquid inside, on a dark reflective table.',
    keywords: ['glass', 'decanter', 'whisky', 'grey', 'studio'], capture: shot('2026-02-13T10:05:12'),
    notes: 'The decanter is a glassmaker’s own design, lent for the shoot; no property release was signed, so it is licensed for editorial use only.',
    // Distinctive product design in frame and no property release: commercial tiers stay withdrawn.
    withdrawn: ['commercial-web', 'commercial-campaign'], propertyRelease: 'PR-NON' },
  { slug: 'three-pears', title: 'Three Pears', series: 'orchard-hours', width: 6000, height: 4000,
    caption: 'Three ripe pears in a row, the middle one a little warmer.',
    altText: 'Three green-gold pears on a dark reflective table, with a warm ochre glow behind.',
    keywords: ['fruit', 'pear', 'trio', 'ochre', 'autumn'], capture: shot('2026-09-02T09:31:00'), overrides: { 'commercial-campaign': 180000 } },
  { slug: 'quince-on-slate', title: 'Quince on Slate', series: 'orchard-hours', width: 4000, height: 6000,
    caption: 'A single downy quince and its leaf resting on a slab of slate.',
    altText: 'One yellow quince on a dark grey slate slab, soft light from above left.',
    keywords: ['fruit', 'quince', 'slate', 'yellow', 'single object'], capture: shot('2026-09-03T10:12:44', '1/125', 14) },
  { slug: 'split-fig', title: 'Split Fig', series: 'orchard-hours', width: 4000, height: 4000,
    caption: 'A fig and its cut half, square and close.',
    altText: 'A whole purple fig and a cut half showing its red seeded centre, on a dusty pink surface.',
    keywords: ['fruit', 'fig', 'close-up', 'macro', 'pink', 'square'], capture: shot('2026-09-04T11:48:19', '1/160', 16) },
  { slug: 'lemon-and-knife', title: 'Lemon and Knife', series: 'orchard-hours', width: 6000, height: 4000,
    caption: 'A lemon, its cut half, and the knife that did it.',
    altText: 'A whole lemon and a cut lemon half on a dark teal table, a wooden-handled knife lying in front of them.',
    keywords: ['fruit', 'lemon', 'knife', 'yellow', 'kitchen', 'teal'], capture: shot('2026-09-05T09:20:33'),
    notes: 'The knife is sharp: it was placed last, with its blade pointing away from the lights, and moved with tongs. ' + flashNote },
  { slug: 'brass-scale', title: 'Brass Scale', series: 'small-tools', width: 6000, height: 4000,
    caption: 'A small brass balance with its pans level and its weights set out on the base.',
    altText: 'A brass balance scale with two hanging pans on a wooden base, lit warmly against an ochre backdrop.',
    keywords: ['tools', 'brass', 'scale', 'balance', 'metal'], capture: shot('2026-05-19T10:00:10', '1/125', 16) },
  { slug: 'spools', title: 'Spools', series: 'small-tools', width: 4000, height: 6000,
    caption: 'Three spools of thread, one loose end wandering off across the table.',
    altText: 'Three spools of ochre, teal and rose thread standing on a pale cream table, a loose thread trailing.',
    keywords: ['tools', 'thread', 'spool', 'wood', 'sewing', 'stack'], capture: shot('2026-05-19T14:44:02', '1/125', 11) },
  { slug: 'old-keys', title: 'Old Keys', series: 'small-tools', width: 2400, height: 1600,
    caption: 'Three old keys, an early test frame from a small travel camera.',
    altText: 'Three old keys, two silver and one brass, laid on a dark table.',
    keywords: ['tools', 'keys', 'iron', 'old', 'metal'],
    capture: { make: 'Stillmark Demo Optics', model: 'SC-2 compact (generated)', lens: '8.8–36.8 mm (generated)', exposureTime: '1/60', fNumber: 4, iso: 200, focalLength: 12, takenAt: '2019-11-23T16:05:41' } },
  { slug: 'plumb-bob', title: 'Plumb Bob', series: 'small-tools', width: 4000, height: 6000, status: 'draft',
    caption: 'A brass plumb bob hanging still on a line.',
    altText: 'A pointed brass plumb bob hanging on a taut string against a teal backdrop.',
    keywords: ['tools', 'brass', 'plumb bob', 'vertical', 'string'], capture: shot('2026-05-20T09:12:30') },
  { slug: 'moon-snail', title: 'Moon Snail', series: 'shells-at-dusk', width: 6000, height: 4000,
    caption: 'Two moon snail shells, their spirals lit low from the side.',
    altText: 'A large and a small cream spiral shell on a reflective table with a dusky violet backdrop.',
    keywords: ['shell', 'spiral', 'sea', 'dusk', 'macro'], capture: shot('2026-07-08T18:20:00', '1/125', 16) },
  { slug: 'egg-held-light', title: 'Egg, Held Light', series: 'shells-at-dusk', width: 4000, height: 6000,
    caption: 'A pale egg in a white porcelain cup, lit from below so its shell glows.',
    altText: 'A cream-coloured egg standing in a small white egg cup against a dusky pink backdrop, glowing softly.',
    keywords: ['egg', 'egg cup', 'porcelain', 'glow', 'pink', 'fragile'], capture: shot('2026-07-08T19:02:14', '1/125', 8) },
  { slug: 'cowrie-row', title: 'Cowrie Row', series: 'shells-at-dusk', width: 6000, height: 4000,
    caption: 'Cowrie shells in a loose line, from largest to smallest.',
    altText: 'A row of speckled cowrie shells graded by size on a dark violet reflective surface.',
    keywords: ['shell', 'cowrie', 'row', 'pattern', 'sand'], capture: shot('2026-07-09T10:33:08', '1/160', 13) },
];
