// A page whose data didn't all load renders an error in place of it: such a page must not be kept
// and served again (server/utils/serving/keptPages.ts), so its request is marked here.
export default defineNuxtPlugin((nuxtApp) => {
  nuxtApp.hook('app:rendered', ({ ssrContext }) => {
    const errors = Object.values(ssrContext?.payload._errors ?? {})
    if (ssrContext?.event && (ssrContext.payload.error || errors.some(Boolean))) ssrContext.event.context.renderFailed = true
  })
})
