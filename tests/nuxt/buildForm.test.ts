import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import BuildForm from '~/components/build/BuildForm.vue'

describe('BuildForm', () => {
  it('offers the build archive of an existing build as a download', async () => {
    const w = await mountSuspended(BuildForm, { props: { build: { slug: 'trailhopper', name: 'Trailhopper', summary: '', archived: false } } })
    const link = w.get('[data-testid="export-build-archive"]')
    expect(link.attributes('href')).toBe('/api/v1/builds/trailhopper/export')
    expect(link.attributes('download')).toBeDefined()
    expect(link.text()).toBe('Export build archive')
  })

  it('has no archive to offer while a build is being created', async () => {
    const w = await mountSuspended(BuildForm, { props: { team: 'drivetrain' } })
    expect(w.find('[data-testid="export-build-archive"]').exists()).toBe(false)
    expect(w.find('[data-testid="build-name-input"]').exists()).toBe(true)
  })
})
