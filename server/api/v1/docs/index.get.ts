// The API reference: the OpenAPI document in a page to browse and try. Everything it loads comes
// from this server (./[file].get.ts); no script is written inline.
const PAGE = `<!doctype html>
<html lang="en">
<head>
  <meta charset="utf-8">
  <meta name="viewport" content="width=device-width, initial-scale=1">
  <title>Ratchet API reference</title>
  <link rel="icon" type="image/svg+xml" href="/favicon.svg">
  <link rel="stylesheet" href="/api/v1/docs/swagger-ui.css">
  <link rel="stylesheet" href="/api/v1/docs/overrides.css">
</head>
<body>
  <div id="api-reference" data-spec="/api/v1/openapi.json"></div>
  <script src="/api/v1/docs/swagger-ui-bundle.js"></script>
  <script src="/api/v1/docs/init.js"></script>
</body>
</html>
`

export default defineEventHandler((event) => {
  setResponseHeaders(event, {
    'Content-Type': 'text/html; charset=utf-8',
    // the page needs nothing from another host; the UI sets style attributes and shows data: images
    'Content-Security-Policy': 'default-src \'self\'; script-src \'self\'; style-src \'self\' \'unsafe-inline\'; img-src \'self\' data:; connect-src \'self\'; object-src \'none\'; base-uri \'none\'; frame-ancestors \'none\'',
  })
  return PAGE
})
