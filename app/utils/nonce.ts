import { createContext, useContext } from "react";

// The per-request CSP nonce, provided by entry.server.tsx around the server render. In the
// browser it is empty (the attribute only matters in the server-rendered HTML).
export const NonceContext = createContext<string | undefined>(undefined);

export function useNonce() {
  return useContext(NonceContext);
}
