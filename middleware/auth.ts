// Pages that need a session opt in with definePageMeta({ middleware: 'auth' }).
export default defineNuxtRouteMiddleware((to) => {
  const { loggedIn } = useUserSession()
  if (!loggedIn.value) {
    return navigateTo({ path: '/login', query: { next: to.fullPath } })
  }
})
