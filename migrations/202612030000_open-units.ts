import type { Knex } from 'knex'

// Units are open expressions now (km/s, N/mm, W/(m·K) …) and a target's quantity is either a
// named one or a dimension in SI base units ("dim:kg·m/s³"), so the closed list of quantities
// goes and the columns widen. Every stored unit keeps its spelling and its meaning.

const QUANTITIES = [
  'velocity', 'mass', 'force', 'torque', 'current', 'voltage', 'power', 'energy', 'charge', 'angularSpeed',
  'length', 'time', 'angle', 'frequency', 'temperature', 'pressure', 'acceleration', 'dimensionless',
]

export async function up(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE targets DROP CONSTRAINT targets_quantity_check')
  await knex.raw('ALTER TABLE targets ALTER COLUMN quantity TYPE varchar(80), ALTER COLUMN unit TYPE varchar(60)')
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_quantity_check CHECK (quantity <> '')`)
  await knex.raw('ALTER TABLE readings ALTER COLUMN unit_entered TYPE varchar(60)')
}

export async function down(knex: Knex): Promise<void> {
  // only possible while every target still measures one of the old quantities in a short unit
  await knex.raw('ALTER TABLE targets DROP CONSTRAINT targets_quantity_check')
  await knex.raw('ALTER TABLE readings ALTER COLUMN unit_entered TYPE varchar(30)')
  await knex.raw('ALTER TABLE targets ALTER COLUMN quantity TYPE varchar(20), ALTER COLUMN unit TYPE varchar(30)')
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_quantity_check CHECK (quantity IN (${QUANTITIES.map(q => `'${q}'`).join(', ')}))`)
}
