/** Cautions shown beside behind-the-scenes notes that mention studio hazards. Pure text rules. */

export interface Caution { hazard: string; text: string }

const RULES: { hazard: string; pattern: RegExp; text: string }[] = [
  {
    hazard: 'studio flash',
    pattern: /\b(studio )?(flash|strobe|speedlight)(es|s)?\b/i,
    text: 'Studio flash units hold a high-voltage charge after switching off. Let them cool and unplug them before touching tubes or lamps, and follow the maker’s instructions.',
  },
  {
    hazard: 'mains power',
    pattern: /\b(mains|extension lead|power cable|230 ?v|120 ?v)\b/i,
    text: 'Keep mains cables dry, uncoiled and out of walkways; use protected sockets (RCD/GFCI) and defer to your local electrical codes.',
  },
  {
    hazard: 'hot lights',
    pattern: /\b(hot lights?|tungsten|halogen|modelling lamps?|continuous lights?)\b/i,
    text: 'Hot lights and modelling lamps burn skin and can scorch props and gels: keep clear space around them and let them cool before handling.',
  },
  {
    hazard: 'sharp tools',
    pattern: /\b(knife|knives|blade|scalpel|razor|sharp)\b/i,
    text: 'Handle blades with care: keep them closed or sheathed while arranging the set, and cut away from yourself.',
  },
];

export function safetyCautions(notes: string): Caution[] {
  return RULES.filter((r) => r.pattern.test(notes)).map(({ hazard, text }) => ({ hazard, text }));
}
