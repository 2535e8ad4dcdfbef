/**
 * Gallery HTML for signed-out visitors, kept in memory per catalogue version. Such a page is the same for
 * every signed-out visitor (its ETag says so already), so rendering it again until the catalogue changes
 * only burns time: under load a render costs tens of times what sending the kept bytes does. A change to
 * any catalogue table moves the version (database triggers), so a newly published work shows at once.
 * Signed-in visitors (their pages name them), query strings and anything but a 200 are never kept.
 */
import type { Sequelize } from 'sequelize';
import { catalogueVersion } from './catalogue-version';
import { db } from './db';

/** The Gallery: home, the series list, a series, a work. */
const GALLERY_PATH = /^\/(?:series(?:\/[a-z0-9-]+)?|works\/[a-z0-9-]+)?$/;
/** Enough for every page of a large catalogue; beyond it, pages simply render each time. */
const MAX_PAGES = 1000;

export interface KeptPage {
  /** UTF-8 bytes, encoded once (not on every send). */
  body: Uint8Array<ArrayBuffer>;
  etag: string;
  headers: [string, string][];
}

let store: { sequelize: Sequelize; version: number; pages: Map<string, KeptPage> } | null = null;

export interface PageSlot {
  /** The page as kept for this catalogue version, if it is. */
  kept: KeptPage | undefined;
  /** Keeps a freshly rendered page under this request's catalogue version. */
  keep(page: KeptPage): void;
}

/** Where a signed-out GET of this URL is kept, or null when such a page is not kept. */
export async function galleryPageSlot(method: string, url: URL): Promise<PageSlot | null> {
  if (method !== 'GET' || url.search !== '' || !GALLERY_PATH.test(url.pathname)) return null;
  const sequelize = db();
  const version = await catalogueVersion(sequelize);
  if (version === null) return null;
  if (!store || store.sequelize !== sequelize || store.version !== version) store = { sequelize, version, pages: new Map() };
  const pages = store.pages;
  return {
    kept: pages.get(url.pathname),
    keep(page) {
      // Rendered while the catalogue moved on: the current store belongs to a newer version.
      if (store?.pages !== pages || pages.size >= MAX_PAGES) return;
      pages.set(url.pathname, page);
    },
  };
}
