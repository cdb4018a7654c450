import { themeBootScript, useTheme } from './useTheme'

/**
 * The head every page shares, the error page too: the theme (set before the first paint, so a dark
 * page never flashes light), the CSP-friendly zod setting and the title template.
 */
export function useAppHead() {
  // the class follows the resolved theme ("system" included, once in the browser): a head update
  // never strips the dark class the boot script set
  const { isDark } = useTheme()
  useHead({
    htmlAttrs: { class: computed(() => (isDark.value ? 'dark' : '')) },
    script: [
      { innerHTML: themeBootScript, tagPosition: 'head' },
      // Zod builds its schemas (at import) with a probe for `new Function`; the pages' Content-
      // Security-Policy allows no eval and reports the probe. Told this before it loads, it skips it.
      { innerHTML: 'globalThis.__zod_globalConfig={jitless:true}', tagPosition: 'head' },
    ],
    titleTemplate: (t?: string) => (t && t !== 'Ratchet' ? `${t} · Ratchet` : 'Ratchet'),
  })
}
