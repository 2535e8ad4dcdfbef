/** The demo shop's shipping zones (prints only; licences are delivered as files). */
import type { QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';
import { ShippingZone } from '../../src/lib/server/models';

type Seed = (params: MigrationParams<QueryInterface>) => Promise<void>;

const EUROPE = ['AT', 'BE', 'BG', 'CH', 'CY', 'CZ', 'DE', 'DK', 'EE', 'ES', 'FI', 'FR', 'GR', 'HR', 'HU', 'IE', 'IS', 'IT', 'LI', 'LT', 'LU', 'LV', 'MT', 'NL', 'NO', 'PL', 'PT', 'RO', 'SE', 'SI', 'SK'];

export const ZONES = [
  { name: 'United Kingdom', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 },
  { name: 'Europe', countries: EUROPE, firstPrint: 1800, eachFurtherPrint: 600 },
  { name: 'Rest of the world', countries: ['*'], firstPrint: 2800, eachFurtherPrint: 900 },
];

export const up: Seed = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    if ((await ShippingZone.count({ transaction })) > 0) return;
    for (const [position, zone] of ZONES.entries()) await ShippingZone.create({ ...zone, position }, { transaction });
  });
};

export const down: Seed = async () => {
  await ShippingZone.destroy({ where: {} });
};
