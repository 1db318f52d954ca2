/**
 * Where the services read the time. The product always uses the system clock; the demo loader replays an invented
 * history with a clock of its own, so every stamp it leaves (readings, steps, findings, signatures, audit events,
 * report rows) is the one the product would have written on that day, and nothing has to be rewritten afterwards.
 */
export type Clock = () => Date

export const systemClock: Clock = () => new Date()
