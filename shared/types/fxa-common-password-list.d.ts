// fxa-common-password-list ships no types.
declare module 'fxa-common-password-list' {
  const list: {
    /** True when the (lower-case) password is on the list. */
    test(password: string): boolean
  }
  export default list
}
