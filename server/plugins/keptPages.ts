// Keeps a build page once rendered (server/utils/serving/keptPages.ts), unless the page saw an error
// while rendering (plugins/keptPage.server.ts marks it).
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('render:response', (response, { event }) => {
    keepPage(event, response, Boolean(event.context.renderFailed))
  })
})
