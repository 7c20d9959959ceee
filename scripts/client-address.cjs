// Preloaded into the web app by `npm start` and `npm test` (NODE_OPTIONS=--require):
// Next.js fills X-Forwarded-For from the socket only when the request has none, so a client
// talking to the app directly could name any address and slip past the per-address sign-in and
// sign-up limits (lib/auth/client-address.ts). Unless BURSTWISE_TRUSTED_PROXY_HOPS says a
// reverse proxy in front appends to the header, the client's header is dropped before Next sees
// it, and Next puts the socket's address there.
"use strict";
const http = require("node:http");

const hops = Number(process.env.BURSTWISE_TRUSTED_PROXY_HOPS ?? 0);
if (!(hops > 0)) {
  const original = http.createServer;
  http.createServer = function createServer(...args) {
    const i = args.findIndex((a) => typeof a === "function");
    if (i >= 0) {
      const listener = args[i];
      args[i] = function dropForwardedFor(req, res) {
        delete req.headers["x-forwarded-for"];
        return listener.call(this, req, res);
      };
    }
    return original.apply(this, args);
  };
}
