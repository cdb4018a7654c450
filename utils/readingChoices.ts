// What a form that records readings offers: the build's targets and revisions, and the ones
// chosen beforehand.

export interface ReadingTargetOption { key: string, name: string, unit: string, quantity: string, caution?: boolean, derived?: boolean }
export interface ReadingRevisionOption { label: string, frozen: boolean }
export interface ReadingFormProps {
  build: string
  targets: ReadingTargetOption[]
  revisions: ReadingRevisionOption[]
  /** the target and revision chosen beforehand */
  target?: string
  revision?: string
}
