import { themeBootScript } from '~/composables/useTheme'

/**
 * The <head> every page needs, the error page too (it renders without app.vue): the theme's class
 * on <html> (dark from the cookie, "system" resolved before paint), Zod's no-eval switch and the
 * title template.
 */
export function useThemeHead() {
  const theme = useCookie('ratchet-theme')
  useHead({
    htmlAttrs: { class: computed(() => (theme.value === 'dark' ? 'dark' : '')) },
    script: [
      { innerHTML: themeBootScript, tagPosition: 'head' },
      // Zod builds its schemas (at import) with a probe for `new Function`; the pages' Content-
      // Security-Policy allows no eval and reports the probe. Told this before it loads, it skips it.
      { innerHTML: 'globalThis.__zod_globalConfig={jitless:true}', tagPosition: 'head' },
    ],
    titleTemplate: (t?: string) => (t && t !== 'Ratchet' ? `${t} · Ratchet` : 'Ratchet'),
  })
}
