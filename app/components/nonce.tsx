import { createContext, useContext } from "react";

const NonceContext = createContext<string | undefined>(undefined);
export const NonceProvider = NonceContext.Provider;
/** The CSP nonce of this document on the server; undefined in the browser, where React Router does not need it. */
export const useNonce = () => useContext(NonceContext);
