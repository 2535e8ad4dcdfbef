/** URL- and file-safe slugs from free text, pure: "Editorial · Digital" → "editorial-digital", "8 × 10 in" → "8-x-10-in". */
export function slugOf(text: string, fallback: string, maxLength: number): string {
  const slug = text
    .normalize('NFKD')
    .replace(/\p{M}+/gu, '')
    .replace(/×/g, 'x')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, maxLength)
    .replace(/-+$/, '');
  return slug || fallback;
}
