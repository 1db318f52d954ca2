import 'reflect-metadata'

// Server tests never build or serve the client; point the static folder somewhere that has no index.html.
process.env.CLIENT_DIST = '/nonexistent-startproof-client'
