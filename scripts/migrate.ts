// Runs migrations and seeds with tsx (knex's own CLI can't load .ts files on Node 20).
//   tsx scripts/migrate.ts latest | rollback-all | seed | status
import knex from 'knex'
import { knexConfig } from '../knexfile'

const command = process.argv[2] ?? 'latest'
const db = knex(knexConfig())

try {
  if (command === 'latest') {
    const [batch, names] = await db.migrate.latest()
    console.log(names.length ? `migrate: batch ${batch}, ${names.length} migrations` : 'migrate: already up to date')
  }
  else if (command === 'rollback-all') {
    const [, names] = await db.migrate.rollback(undefined, true)
    console.log(`migrate: rolled back ${names.length} migrations`)
  }
  else if (command === 'seed') {
    const [names] = await db.seed.run()
    console.log(`seed: ran ${names.length} seed files`)
  }
  else if (command === 'status') {
    const [done, pending] = await db.migrate.list()
    console.log(`migrate: ${done.length} done, ${pending.length} pending`)
  }
  else {
    console.error(`unknown command ${command}`)
    process.exitCode = 2
  }
}
finally {
  await db.destroy()
}
