// Starts the API reference on /api/v1/docs (a file of its own: the page runs no inline script).
window.addEventListener('DOMContentLoaded', () => {
  const root = document.getElementById('api-reference')
  window.ui = window.SwaggerUIBundle({
    url: root.dataset.spec,
    domNode: root,
    // no deep links: they put a link inside each operation's toggle button, which assistive
    // technology can't reach (a control inside a control)
    deepLinking: false,
    // no badge from an outside validator: the page talks to this server only
    validatorUrl: null,
    tryItOutEnabled: false,
    defaultModelsExpandDepth: 0,
  })
  // the servers list has a caption but no label; name it once the UI has drawn it
  const name = () => document.getElementById('servers')?.setAttribute('aria-label', 'Servers')
  new MutationObserver(name).observe(root, { childList: true, subtree: true })
})
