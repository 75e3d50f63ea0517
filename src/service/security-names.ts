// Names shared by the command line and the service's security (kept free of libraries: the CLI loads it at start).

/** Environment variable naming the token file when --token-file is not given. */
export const TOKEN_FILE_ENV = 'RENYI_BOUND_TOKEN_FILE';
