import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

const id = { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false };
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};
const ref = (table: string, onDelete: 'CASCADE' | 'RESTRICT' | 'SET NULL', allowNull = false) => ({
  type: DataTypes.INTEGER,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
  onUpdate: 'CASCADE',
});

export const up: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    await qi.createTable('shop_settings', {
      id,
      shop_name: { type: DataTypes.STRING, allowNull: false },
      photographer_name: { type: DataTypes.STRING, allowNull: false },
      tagline: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
      currency: { type: DataTypes.STRING(3), allowNull: false, defaultValue: 'GBP' },
      target_ppi: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 300 },
      floor_ppi: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 240 },
      wall_floor_ppi: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 150 },
      viewing_distance_factor: { type: DataTypes.REAL, allowNull: false, defaultValue: 1.5 },
      watermark_text: { type: DataTypes.STRING, allowNull: false },
      limited_edition_premium_bp: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...timestamps,
    }, { transaction });

    await qi.createTable('series', {
      id,
      slug: { type: DataTypes.STRING, allowNull: false, unique: true },
      title: { type: DataTypes.STRING, allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      position: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...timestamps,
    }, { transaction });

    await qi.createTable('works', {
      id,
      slug: { type: DataTypes.STRING, allowNull: false, unique: true },
      title: { type: DataTypes.STRING, allowNull: false },
      caption: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      alt_text: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      keywords: { type: DataTypes.JSON, allowNull: false, defaultValue: '[]' },
      notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      series_id: ref('series', 'SET NULL', true),
      width: { type: DataTypes.INTEGER, allowNull: false },
      height: { type: DataTypes.INTEGER, allowNull: false },
      orientation: { type: DataTypes.STRING, allowNull: false },
      focal_x: { type: DataTypes.REAL, allowNull: false, defaultValue: 0.5 },
      focal_y: { type: DataTypes.REAL, allowNull: false, defaultValue: 0.5 },
      capture: { type: DataTypes.JSON, allowNull: false, defaultValue: '{}' },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'draft' },
      published_at: { type: DataTypes.DATE, allowNull: true },
      property_release: { type: DataTypes.STRING, allowNull: false, defaultValue: 'PR-NAP' },
      original_key: { type: DataTypes.STRING, allowNull: false },
      original_sha256: { type: DataTypes.STRING(64), allowNull: false },
      colour_profile: { type: DataTypes.STRING, allowNull: true },
      derivatives: { type: DataTypes.JSON, allowNull: false },
      placeholder: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      dominant_color: { type: DataTypes.STRING, allowNull: false, defaultValue: '#808080' },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('works', ['status', 'published_at'], { transaction });
    await qi.addIndex('works', ['series_id'], { transaction });
    await qi.addIndex('works', ['original_sha256'], { transaction });

    await qi.createTable('licence_tiers', {
      id,
      slug: { type: DataTypes.STRING, allowNull: false, unique: true },
      name: { type: DataTypes.STRING, allowNull: false },
      use: { type: DataTypes.STRING, allowNull: false },
      summary: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
      terms: { type: DataTypes.TEXT, allowNull: false },
      media: { type: DataTypes.STRING, allowNull: false },
      cap: { type: DataTypes.INTEGER, allowNull: true },
      cap_unit: { type: DataTypes.STRING, allowNull: true },
      territory: { type: DataTypes.STRING, allowNull: false },
      term_months: { type: DataTypes.INTEGER, allowNull: true },
      default_price: { type: DataTypes.INTEGER, allowNull: false },
      position: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      ...timestamps,
    }, { transaction });

    await qi.createTable('work_licence_prices', {
      id,
      work_id: ref('works', 'CASCADE'),
      licence_tier_id: ref('licence_tiers', 'CASCADE'),
      mode: { type: DataTypes.STRING, allowNull: false },
      price: { type: DataTypes.INTEGER, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('work_licence_prices', ['work_id', 'licence_tier_id'], { unique: true, transaction });

    await qi.createTable('print_sizes', {
      id,
      slug: { type: DataTypes.STRING, allowNull: false, unique: true },
      label: { type: DataTypes.STRING, allowNull: false },
      family: { type: DataTypes.STRING, allowNull: false },
      unit: { type: DataTypes.STRING, allowNull: false },
      width: { type: DataTypes.REAL, allowNull: false },
      height: { type: DataTypes.REAL, allowNull: false },
      base_price: { type: DataTypes.INTEGER, allowNull: false },
      position: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      ...timestamps,
    }, { transaction });

    await qi.createTable('papers', {
      id,
      slug: { type: DataTypes.STRING, allowNull: false, unique: true },
      name: { type: DataTypes.STRING, allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      surface: { type: DataTypes.STRING, allowNull: false },
      weight_gsm: { type: DataTypes.INTEGER, allowNull: false },
      surcharge_bp: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      position: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      ...timestamps,
    }, { transaction });

    await qi.createTable('editions', {
      id,
      work_id: ref('works', 'CASCADE'),
      print_size_id: ref('print_sizes', 'RESTRICT'),
      kind: { type: DataTypes.STRING, allowNull: false },
      total: { type: DataTypes.INTEGER, allowNull: true },
      artist_proofs: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('editions', ['work_id', 'print_size_id'], { unique: true, transaction });

    await qi.createTable('print_offers', {
      id,
      work_id: ref('works', 'CASCADE'),
      print_size_id: ref('print_sizes', 'RESTRICT'),
      paper_id: ref('papers', 'RESTRICT'),
      edition_id: ref('editions', 'RESTRICT'),
      price_override: { type: DataTypes.INTEGER, allowNull: true },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('print_offers', ['work_id', 'print_size_id', 'paper_id'], { unique: true, transaction });

    // Checks that Sequelize's createTable cannot express are enforced by triggers.
    const checks: [string, string, string][] = [
      ['works', "NEW.status NOT IN ('draft','published')", 'work status must be draft or published'],
      ['works', "NEW.orientation NOT IN ('landscape','portrait','square')", 'bad orientation'],
      ['works', 'NEW.width <= 0 OR NEW.height <= 0', 'pixel size must be positive'],
      ['works', 'NEW.focal_x < 0 OR NEW.focal_x > 1 OR NEW.focal_y < 0 OR NEW.focal_y > 1', 'focal point must lie inside the image'],
      ['licence_tiers', "NEW.use NOT IN ('editorial','commercial')", 'licence use must be editorial or commercial'],
      ['licence_tiers', 'NEW.default_price < 0', 'price must not be negative'],
      ['work_licence_prices', "NEW.mode NOT IN ('override','withdrawn') OR (NEW.mode = 'override' AND (NEW.price IS NULL OR NEW.price < 0))", 'an override needs a price'],
      ['print_sizes', "NEW.unit NOT IN ('mm','in') OR NEW.width <= 0 OR NEW.height <= 0 OR NEW.base_price < 0", 'bad print size'],
      ['editions', "NEW.kind NOT IN ('open','limited') OR (NEW.kind = 'limited' AND (NEW.total IS NULL OR NEW.total < 1)) OR (NEW.kind = 'open' AND NEW.total IS NOT NULL) OR NEW.artist_proofs < 0", 'a limited edition needs a size N of at least 1; an open edition has none'],
      ['print_offers', 'NEW.price_override IS NOT NULL AND NEW.price_override < 0', 'price must not be negative'],
    ];
    for (const [index, [table, condition, message]] of checks.entries()) {
      for (const event of ['INSERT', 'UPDATE']) {
        await sequelize.query(
          `CREATE TRIGGER check_${index}_${table}_${event.toLowerCase()} BEFORE ${event} ON ${table}
           FOR EACH ROW WHEN ${condition} BEGIN SELECT RAISE(ABORT, '${message}'); END`,
          { transaction },
        );
      }
    }

    // Full-text search over the words a buyer types: title, caption, keywords, alt text.
    await sequelize.query(
      `CREATE VIRTUAL TABLE works_fts USING fts5(title, caption, keywords, alt_text, content='works', content_rowid='id', tokenize='porter unicode61 remove_diacritics 2')`,
      { transaction },
    );
    await sequelize.query(
      `CREATE TRIGGER works_fts_insert AFTER INSERT ON works BEGIN
         INSERT INTO works_fts(rowid, title, caption, keywords, alt_text) VALUES (NEW.id, NEW.title, NEW.caption, NEW.keywords, NEW.alt_text);
       END`,
      { transaction },
    );
    await sequelize.query(
      `CREATE TRIGGER works_fts_delete AFTER DELETE ON works BEGIN
         INSERT INTO works_fts(works_fts, rowid, title, caption, keywords, alt_text) VALUES ('delete', OLD.id, OLD.title, OLD.caption, OLD.keywords, OLD.alt_text);
       END`,
      { transaction },
    );
    await sequelize.query(
      `CREATE TRIGGER works_fts_update AFTER UPDATE OF title, caption, keywords, alt_text ON works BEGIN
         INSERT INTO works_fts(works_fts, rowid, title, caption, keywords, alt_text) VALUES ('delete', OLD.id, OLD.title, OLD.caption, OLD.keywords, OLD.alt_text);
         INSERT INTO works_fts(rowid, title, caption, keywords, alt_text) VALUES (NEW.id, NEW.title, NEW.caption, NEW.keywords, NEW.alt_text);
       END`,
      { transaction },
    );
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await qi.sequelize.query('DROP TABLE IF EXISTS works_fts', { transaction });
    for (const table of ['print_offers', 'editions', 'papers', 'print_sizes', 'work_licence_prices', 'licence_tiers', 'works', 'series', 'shop_settings']) {
      await qi.dropTable(table, { transaction });
    }
  });
};
