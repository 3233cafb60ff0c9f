import { z } from "zod";

// In the browser zod would probe whether it may compile its parsers with `Function(...)`;
// the Content-Security-Policy (lib/http/csp.ts) allows no eval, so the probe is refused
// and reported as a violation. Parse without compiling there: the same results, a little
// slower, and no eval allowed anywhere. Imported for its effect by the modules that hold
// the schemas a page uses, so it runs before the first parse.
if (typeof window !== "undefined") z.config({ jitless: true });
