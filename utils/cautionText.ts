const HAZARDS: Record<string, string> = {
  current: 'High current and battery packs can burn and start fires.',
  charge: 'Charged battery packs can burn and start fires.',
  energy: 'Stored energy can be released suddenly.',
  voltage: 'Voltage can shock; mains and high voltage can kill.',
  power: 'High power drives, cables and packs get hot and can fail.',
  temperature: 'Hot motor cases and parts can burn.',
  angularSpeed: 'Spinning parts can catch, cut and throw debris.',
  velocity: 'Moving parts and projectiles can hurt.',
  pressure: 'Pressurised parts can burst.',
  torque: 'High-torque drives can trap fingers.',
}

/** The usual short caution for a quantity that can hurt. */
export function cautionText(quantity: string | null | undefined): string {
  const hazard = (quantity && Object.hasOwn(HAZARDS, quantity) && HAZARDS[quantity]) || 'This test can hurt people or damage equipment.'
  return `${hazard} Guard the test and follow local codes and licensed practice.`
}
