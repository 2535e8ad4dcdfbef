import type { Sequelize } from 'sequelize';
import { ShopSettings } from './ShopSettings';
import { Series } from './Series';
import { Work } from './Work';
import { LicenceTier } from './LicenceTier';
import { WorkLicencePrice } from './WorkLicencePrice';
import { PrintSize } from './PrintSize';
import { Paper } from './Paper';
import { Edition } from './Edition';
import { PrintOffer } from './PrintOffer';
import { Order } from './Order';
import { OrderLine } from './OrderLine';
import { EditionNumber } from './EditionNumber';
import { Licence } from './Licence';
import { DownloadGrant } from './DownloadGrant';
import { ShippingZone } from './ShippingZone';
import { Refund } from './Refund';
import { LicenceQuote } from './LicenceQuote';
import { AuditEvent } from './AuditEvent';

export { ShopSettings, Series, Work, LicenceTier, WorkLicencePrice, PrintSize, Paper, Edition, PrintOffer, Order, OrderLine, EditionNumber, Licence, DownloadGrant, ShippingZone, Refund, LicenceQuote, AuditEvent };

let initialisedFor: Sequelize | undefined;

/** Binds every model to `sequelize` and declares the associations (the schema itself comes from migrations). */
export function initModels(sequelize: Sequelize): void {
  if (initialisedFor === sequelize) return;
  initialisedFor = sequelize;
  for (const model of [ShopSettings, Series, Work, LicenceTier, WorkLicencePrice, PrintSize, Paper, Edition, PrintOffer, Order, OrderLine, EditionNumber, Licence, DownloadGrant, ShippingZone, Refund, LicenceQuote, AuditEvent]) {
    model.initModel(sequelize);
  }
  Series.hasMany(Work, { as: 'works', foreignKey: 'seriesId' });
  Work.belongsTo(Series, { as: 'series', foreignKey: 'seriesId' });
  Work.hasMany(PrintOffer, { as: 'offers', foreignKey: 'workId' });
  Work.hasMany(WorkLicencePrice, { as: 'licencePrices', foreignKey: 'workId' });
  Work.hasMany(Edition, { as: 'editions', foreignKey: 'workId' });
  WorkLicencePrice.belongsTo(LicenceTier, { as: 'tier', foreignKey: 'licenceTierId' });
  Edition.belongsTo(PrintSize, { as: 'size', foreignKey: 'printSizeId' });
  PrintOffer.belongsTo(Work, { as: 'work', foreignKey: 'workId' });
  PrintOffer.belongsTo(PrintSize, { as: 'size', foreignKey: 'printSizeId' });
  PrintOffer.belongsTo(Paper, { as: 'paper', foreignKey: 'paperId' });
  PrintOffer.belongsTo(Edition, { as: 'edition', foreignKey: 'editionId' });
  Order.hasMany(OrderLine, { as: 'lines', foreignKey: 'orderId' });
  OrderLine.belongsTo(Order, { as: 'order', foreignKey: 'orderId' });
  Order.hasMany(Refund, { as: 'refunds', foreignKey: 'orderId' });
  LicenceQuote.belongsTo(Work, { as: 'work', foreignKey: 'workId' });
}
