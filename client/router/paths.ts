/**
 * Paths of the pages a tablet opens on weak signal, named once: the router serves them, and the build (vite.config.ts)
 * bundles each page's code into one file that the server names in a `Link` header for these paths.
 */
export const SIGN_IN_PATH = '/sign-in'
export const RUN_PATH = '/runs/:runId'
