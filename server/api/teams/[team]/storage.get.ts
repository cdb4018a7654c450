import type { StorageUsage } from '#shared/types/files'

export default defineEventHandler(async (event): Promise<StorageUsage> => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'reviewer')
  return await storageUsage(useDb(), team)
})
