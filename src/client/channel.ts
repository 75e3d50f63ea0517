// How every client channel is built (solve, sweep, health, the library): credentials and options in one place.
import * as grpc from '@grpc/grpc-js';
import { DEFAULT_MAX_MESSAGE_BYTES, TRANSPORT_CAP_FACTOR } from '../service/message-size.js';
import { channelCredentials, clientOptions, getDefaultClientSecurity, type ClientSecurity } from '../service/security.js';

/** Largest message the client accepts (the server's default limit). */
const clientMaxMessageBytes = DEFAULT_MAX_MESSAGE_BYTES;

/**
 * Credentials and channel options of every client channel: round robin over the resolved addresses (gRPC's
 * own client-side balancing; a failed address leaves the rotation until it reconnects), the message limit, and
 * the TLS credentials and bearer token of the command line's security options.
 */
export function channelSettings(
  security: ClientSecurity = getDefaultClientSecurity(),
): { credentials: grpc.ChannelCredentials; options: grpc.ClientOptions } {
  return {
    credentials: channelCredentials(security),
    options: {
      ...clientOptions(security),
      'grpc.service_config': JSON.stringify({ loadBalancingConfig: [{ round_robin: {} }] }),
      'grpc.max_receive_message_length': clientMaxMessageBytes,
      // Larger requests go out, so that the server's INVALID_ARGUMENT names its limit instead of a local refusal.
      'grpc.max_send_message_length': clientMaxMessageBytes * TRANSPORT_CAP_FACTOR,
    },
  };
}
