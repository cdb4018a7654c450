// Starts the API reference on /api/v1/docs (a file of its own: the page runs no inline script).
window.addEventListener('DOMContentLoaded', () => {
  const root = document.getElementById('api-reference')
  window.ui = window.SwaggerUIBundle({
    url: root.dataset.spec,
    domNode: root,
    deepLinking: true,
    // no badge from an outside validator: the page talks to this server only
    validatorUrl: null,
    tryItOutEnabled: false,
    defaultModelsExpandDepth: 0,
  })
})
