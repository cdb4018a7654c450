// A build page kept since nothing it shows has changed is served from here (server/utils/serving/keptPages.ts).
export default defineEventHandler(event => keptPage(event))
