export type ThemeChoice = 'system' | 'light' | 'dark'

const COOKIE = 'ratchet-theme'

/**
 * Light / dark / follow the system. The choice is kept in a cookie so the server renders the
 * right class on <html>; "system" is resolved before paint by the inline script in app.vue.
 */
export function useTheme() {
  const choice = useCookie<ThemeChoice>(COOKIE, {
    default: () => 'system',
    maxAge: 60 * 60 * 24 * 365,
    sameSite: 'lax',
  })
  const systemDark = usePreferredDark()
  const isDark = computed(() => choice.value === 'dark' || (choice.value === 'system' && import.meta.client && systemDark.value))

  function cycle() {
    const order: ThemeChoice[] = ['system', 'light', 'dark']
    choice.value = order[(order.indexOf(choice.value) + 1) % order.length]!
  }

  return { choice, isDark, cycle }
}

/** Runs before first paint: applies the stored choice, or the system preference. */
export const themeBootScript = `(function(){try{var m=document.cookie.match(/(?:^|; )${COOKIE}=([^;]*)/);var c=m?decodeURIComponent(m[1]):'system';var d=c==='dark'||(c!=='light'&&window.matchMedia('(prefers-color-scheme: dark)').matches);document.documentElement.classList.toggle('dark',d)}catch(e){}})()`
