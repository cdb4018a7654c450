import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import ReadingForm from '~/components/reading/ReadingForm.vue'
import type { ReadingFormProps } from '~/utils/readingChoices'

const targets: ReadingFormProps['targets'] = [
  { key: 'range', name: 'Range per charge', unit: 'km', quantity: 'length', derived: true },
  { key: 'top-speed', name: 'Top speed', unit: 'km/h', quantity: 'velocity' },
  { key: 'pack-voltage', name: 'Pack voltage', unit: 'V', quantity: 'voltage', caution: true },
]
const revisions: ReadingFormProps['revisions'] = [
  { label: 'R1', frozen: true },
  { label: 'R2', frozen: false },
  { label: 'R3', frozen: false },
  { label: 'R4', frozen: true },
]

function mount(props: Partial<ReadingFormProps> = {}) {
  return mountSuspended(ReadingForm, { props: { build: 'trailhopper', targets, revisions, ...props } })
}

const squash = (s: string) => s.replace(/\s+/g, ' ').trim()
type Form = Awaited<ReturnType<typeof mount>>
const value = (w: Form, id: string) => (w.get(`[data-testid="${id}"]`).element as HTMLInputElement).value

describe('ReadingForm', () => {
  it('starts on the latest open revision and the first measurable target, in its unit', async () => {
    const w = await mount()
    expect(value(w, 'reading-revision')).toBe('R3')
    const options = w.get('[data-testid="reading-revision"]').findAll('option')
    expect(options.map(o => [squash(o.text()), o.attributes('disabled') !== undefined])).toEqual([
      ['R1 (signed off)', true], ['R2', false], ['R3', false], ['R4 (signed off)', true],
    ])
    // a derived target takes no readings of its own
    expect(w.get('[data-testid="reading-target"]').findAll('option').map(o => o.text())).toEqual(['Top speed (km/h)', 'Pack voltage (V)'])
    expect(value(w, 'reading-target')).toBe('top-speed')
    expect(value(w, 'reading-unit')).toBe('km/h')
    expect(w.find('[data-testid="caution"]').exists()).toBe(false)
  })

  it('takes the target and revision chosen beforehand, and shows the caution for one that can hurt', async () => {
    const w = await mount({ target: 'pack-voltage', revision: 'R2' })
    expect(value(w, 'reading-revision')).toBe('R2')
    expect(value(w, 'reading-unit')).toBe('V')
    expect(squash(w.get('[data-testid="caution"]').text())).toContain('Voltage can shock')
    expect(w.get('[data-testid="caution"]').text()).toContain('follow local codes and licensed practice')
  })

  it('follows the target: its unit, its caution', async () => {
    const w = await mount()
    await w.get('[data-testid="reading-target"]').setValue('pack-voltage')
    expect(value(w, 'reading-unit')).toBe('V')
    expect(w.find('[data-testid="caution"]').exists()).toBe(true)
  })

  it('counts the samples as they are typed or pasted, and names the ones that are not numbers', async () => {
    const w = await mount()
    const samples = w.get('[data-testid="reading-samples"]')
    await samples.setValue('24.1\n24.3, 24.2;24.25\t\u221224.0')
    expect(squash(w.get('[data-testid="sample-count"]').text())).toBe('n = 5')
    await samples.setValue('24.1\nabc\n24.3\n1O.5')
    expect(squash(w.get('[data-testid="sample-count"]').text())).toBe('n = 2')
    expect(w.get('[role="alert"]').text()).toBe('Not a number: "abc", "1O.5". Use a point for decimals.')
  })

  it('refuses to send what the server would refuse, and says why next to each field', async () => {
    const w = await mount()
    await w.get('[data-testid="reading-samples"]').setValue('')
    await w.get('[data-testid="reading-resolution"]').setValue('half a mm')
    await w.get('form').trigger('submit')
    expect(w.emitted('saved')).toBeUndefined()
    const errors = w.findAll('.error-text').map(e => squash(e.text()))
    expect(errors).toContain('Give at least one value')
    expect(errors).toContain('Not a number')
  })

  it('says when every revision is signed off, and offers no save', async () => {
    const w = await mount({ revisions: revisions.map(r => ({ ...r, frozen: true })) })
    expect(w.text()).toContain('Every revision is signed off; create a new revision first.')
    expect(w.get('[data-testid="reading-save"]').attributes('disabled')).toBeDefined()
  })

  it('emits cancel', async () => {
    const w = await mount()
    await w.findAll('button').find(b => b.text() === 'Cancel')!.trigger('click')
    expect(w.emitted('cancel')).toEqual([[]])
  })

  it('offers a stated result beside samples: value, u and degrees of freedom, each checked before sending', async () => {
    const w = await mount()
    const kinds = w.findAll('[role="radiogroup"] input[type="radio"]')
    expect(kinds.map(k => (k.element as HTMLInputElement).value)).toEqual(['samples', 'stated'])
    expect(w.get('[role="radiogroup"]').attributes('aria-labelledby')).toBeTruthy()
    await w.get('[data-testid="reading-kind-stated"]').setValue(true)
    expect(w.find('[data-testid="reading-samples"]').exists()).toBe(false)
    expect(w.find('[data-testid="reading-resolution"]').exists()).toBe(false)
    await w.get('[data-testid="reading-u"]').setValue('-0.2')
    await w.get('[data-testid="reading-dof"]').setValue('many')
    await w.get('form').trigger('submit')
    expect(w.emitted('saved')).toBeUndefined()
    const errors = w.findAll('.error-text').map(e => squash(e.text()))
    expect(errors).toContain('Enter the result')
    expect(errors).toContain('The standard uncertainty u is 0 or more')
    expect(errors).toContain('Not a number; leave it blank for infinite')
    // back to samples: the samples field returns, the stated fields go
    await w.get('[data-testid="reading-kind-samples"]').setValue(true)
    expect(w.find('[data-testid="reading-samples"]').exists()).toBe(true)
    expect(w.find('[data-testid="reading-u"]').exists()).toBe(false)
  })
})
