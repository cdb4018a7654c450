export default defineEventHandler(event => listVisibleBuilds(event))
