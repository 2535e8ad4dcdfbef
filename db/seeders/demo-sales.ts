/**
 * The demo shop's past season of orders: invented buyers (all on the reserved `.example` domain, RFC 2606),
 * what each of them tends to buy, and a small seeded random generator so every run tells the same story.
 * Everything here is our own invention and is used only by the demo-sales seed.
 */
import type { ShippingAddress } from '../../src/lib/checkout';

/**
 * mulberry32: a 32-bit seeded generator (public domain, from memory). Not for secrets: only for
 * choosing which invented order comes next.
 */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export type Random = () => number;

export function pick<T>(random: Random, items: readonly T[]): T {
  return items[Math.floor(random() * items.length)]!;
}

/** Picks by weight; items with weight 0 are never picked. */
export function pickWeighted<T>(random: Random, items: readonly (readonly [T, number])[]): T {
  const sum = items.reduce((n, [, w]) => n + w, 0);
  let r = random() * sum;
  for (const [item, w] of items) {
    if ((r -= w) < 0) return item;
  }
  return items.at(-1)![0];
}

/** What a buyer comes for: licences for one kind of use, prints, or both. */
export type BuyerHabit = 'press-digital' | 'press-book' | 'brand' | 'collector' | 'interiors' | 'campaign';

export interface DemoBuyer {
  name: string;
  email: string;
  /** The licensee as the buyer names it at checkout (a legal name for a company). */
  licensee: { name: string; organisation: string };
  habit: BuyerHabit;
  /** How often this buyer orders, relative to the others. */
  weight: number;
  /** False: the account was closed since, so the orders keep no account (user_id null). */
  account: boolean;
  address: ShippingAddress | null;
  uses: string[];
}

export const DEMO_SALES_SEED = 0x5eed2026;
/** Seed orders are known by their payment session ids, so the seed never touches any other order. */
export const DEMO_SESSION_PREFIX = 'cs_demo_seed_';
export const DEMO_INTENT_PREFIX = 'pi_demo_seed_';
export const DEMO_EVENT_PREFIX = 'evt_demo_seed_';
export const DEMO_REFUND_PREFIX = 'demo-seed-refund-';

export const DEMO_BUYERS: DemoBuyer[] = [
  {
    name: 'Hattie Vane', email: 'hattie.vane@fenwick-press.example', licensee: { name: 'Fenwick Press Ltd', organisation: 'Fenwick Press' },
    habit: 'press-book', weight: 3, account: true, address: null,
    uses: [
      'Inside pages of “A Kitchen Year”, hardback, first printing of 4,000 copies',
      'Chapter opener in “Glass: A Short History”, 6,500 copies',
      'Inside pages of “The Fruit Shelf”, paperback, 12,000 copies',
      'Endpaper detail for “Small Hours”, a poetry collection, 3,000 copies',
    ],
  },
  {
    name: 'Marek Osei', email: 'picture.desk@quayside-weekly.example', licensee: { name: 'Quayside Weekly Media Ltd', organisation: 'Quayside Weekly' },
    habit: 'press-digital', weight: 4, account: true, address: null,
    uses: [
      'One online feature on the autumn markets',
      'Web review of a glassware exhibition',
      'Online column on slow cooking, with its social posts',
      'Digital edition feature on craft workshops',
    ],
  },
  {
    name: 'Theo Marchetti', email: 'theo@longtable-mag.example', licensee: { name: 'The Long Table Magazine Srl', organisation: 'The Long Table' },
    habit: 'press-digital', weight: 2.5, account: true, address: null,
    uses: [
      'Recipe feature online, spring issue',
      'Essay on still life in food writing, web and app',
      'Print issue, inside pages, 18,000 copies',
    ],
  },
  {
    name: 'Priya Lindqvist', email: 'priya@lindqvist-ceramics.example', licensee: { name: 'Lindqvist Ceramics AB', organisation: 'Lindqvist Ceramics' },
    habit: 'brand', weight: 2, account: true,
    address: { name: 'Priya Lindqvist', line1: 'Krukmakargatan 12', line2: '', city: 'Malmö', postalCode: '211 22', country: 'SE' },
    uses: [
      'Homepage header and newsletter for the new glaze range',
      'About page and organic social posts for the studio',
    ],
  },
  {
    name: 'Ada Brennock', email: 'ada.brennock@post.example', licensee: { name: 'Ada Brennock', organisation: '' },
    habit: 'collector', weight: 3, account: true,
    address: { name: 'Ada Brennock', line1: '17 Rookery Terrace', line2: '', city: 'York', postalCode: 'YO31 7QT', country: 'GB' },
    uses: [],
  },
  {
    name: 'Jonas Feld', email: 'jonas.feld@mailbox.example', licensee: { name: 'Jonas Feld', organisation: '' },
    habit: 'collector', weight: 2.5, account: true,
    address: { name: 'Jonas Feld', line1: 'Gartenstraße 41', line2: '3. OG', city: 'Leipzig', postalCode: '04109', country: 'DE' },
    uses: [],
  },
  {
    name: 'Colette Marr', email: 'colette@marr-interiors.example', licensee: { name: 'Marr Interiors SARL', organisation: 'Marr Interiors' },
    habit: 'interiors', weight: 2, account: true,
    address: { name: 'Marr Interiors', line1: '8 rue des Tanneurs', line2: 'Atelier B', city: 'Lyon', postalCode: '69002', country: 'FR' },
    uses: ['Portfolio pages and social posts showing a finished dining room', 'Studio website, projects page'],
  },
  {
    name: 'Sam Okafor', email: 'sam.okafor@inbox.example', licensee: { name: 'Sam Okafor', organisation: '' },
    habit: 'collector', weight: 1.5, account: false,
    address: { name: 'Sam Okafor', line1: '420 Alder Street', line2: 'Apt 5', city: 'Portland', postalCode: '97205', country: 'US' },
    uses: [],
  },
  {
    name: 'Ruth Achterberg', email: 'ruth@kilnhouse-tea.example', licensee: { name: 'Kilnhouse Tea Company BV', organisation: 'Kilnhouse Tea' },
    habit: 'campaign', weight: 0.6, account: false, address: null,
    uses: ['Autumn poster and paid social campaign in the Netherlands', 'Point-of-sale cards and print adverts, one country'],
  },
];

/** Some works sell more than others; unnamed works weigh 1. */
export const WORK_APPEAL: Record<string, number> = {
  'three-pears': 3, 'carafe-amber-hour': 2.6, 'blue-bottle-long-shadow': 2.2, 'split-fig': 2, 'lemon-and-knife': 1.8,
  'quince-on-slate': 1.5, 'water-line': 1.3, 'brass-scale': 1.2, 'cowrie-row': 1.1, 'egg-held-light': 1, 'spools': 0.9,
  'two-tumblers': 0.9, 'decanter-study': 0.8, 'moon-snail': 0.8, 'old-keys': 0.4,
};

/** Print sizes by how often they are bought (small prints sell most; the limited sizes rarely). */
export const SIZE_APPEAL: Record<string, number> = {
  a4: 3, a3: 3, '8x10': 3, '11x14': 2, a2: 1.5, '12x18': 1.5, '16x20': 1, '20x30': 0.5, '24x36': 0.3,
};

/**
 * Limited editions the seed never sells from: the browser tests buy the first number of Moon Snail's
 * 16 × 20 in edition and expect 1/25, so that work's editions stay untouched.
 */
export const UNTOUCHED_EDITION_WORKS = ['moon-snail'];

export const REFUND_REASON_TEXT = {
  wrongTier: 'The buyer asked for it — bought the wrong licence for the use',
  duplicate: 'Paid twice — the same licence bought on two accounts',
  changedMind: 'The buyer asked for it — changed their mind before production',
  damaged: 'The print arrived damaged — corner crushed in transit',
  late: 'Goodwill — the parcel arrived a week late',
  dropLicence: 'Not what the buyer was told — the project was cancelled',
} as const;
