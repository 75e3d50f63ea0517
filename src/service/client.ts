// The client library moved to src/client/; this module keeps older imports working.
export * from '../client/client.js';
