// The security options of the service commands: TLS files and the token file (never the token itself, which
// would show in the process list and the shell history).
import type { Command } from './command-line.js';
import { TOKEN_FILE_ENV } from '../service/security-names.js';

/** What the command line collects from the options added below. */
export interface SecurityCommandOptions {
  tokenFile?: string;
  tlsCa?: string;
  tlsCert?: string;
  tlsKey?: string;
  tlsClientCa?: string;
  allowInsecureRemote?: boolean;
  healthPort?: string;
}

const TOKEN_FILE_HELP = `file holding the bearer token (default: the file named by ${TOKEN_FILE_ENV})`;

/** `serve`: server certificate and key, the CA of client certificates (mutual TLS), the token file. */
export function addServerSecurityOptions(command: Command): Command {
  return command
    .option('--tls-cert <cert.pem>', 'serve TLS with this certificate chain (PEM)')
    .option('--tls-key <key.pem>', 'private key of --tls-cert (PEM)')
    .option('--tls-client-ca <ca.pem>', 'require client certificates signed by this CA (mutual TLS)')
    .option('--token-file <path>', `${TOKEN_FILE_HELP}; every RPC but health must carry it (one token per line: each is accepted)`)
    .option('--allow-insecure-remote', 'allow a non-loopback --host without TLS and without a token (trusted networks only)')
    .option('--health-port <port>', 'also serve grpc.health.v1 alone, in plaintext, on this port (for probes that cannot speak TLS)');
}

/** Client commands: the CA of the server's certificate, a client pair for mutual TLS, the token file. */
export function addClientSecurityOptions(command: Command): Command {
  return command
    .option('--tls-ca <ca.pem>', 'connect with TLS, trusting server certificates signed by this CA')
    .option('--tls-cert <cert.pem>', 'client certificate for mutual TLS (PEM)')
    .option('--tls-key <key.pem>', 'private key of the client certificate (PEM)')
    .option('--token-file <path>', `${TOKEN_FILE_HELP}; the first line is sent`);
}
