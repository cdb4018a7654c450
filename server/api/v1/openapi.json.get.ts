// The API v1 description, public like the README that points to it.
export default defineEventHandler(() => openApiDocument())
