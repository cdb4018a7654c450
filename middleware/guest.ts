// Sign-in and sign-up pages send a signed-in person on to their teams.
export default defineNuxtRouteMiddleware(() => {
  const { loggedIn } = useUserSession()
  if (loggedIn.value) return navigateTo('/teams')
})
