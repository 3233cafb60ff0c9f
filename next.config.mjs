// Headers every answer carries, pages, API and static files alike (the
// Content-Security-Policy, which varies per page, is set in proxy.ts):
// no framing by any page (X-Frame-Options for browsers that predate frame-ancestors),
// no guessing of content types, no address of a lab page sent to another site, and no
// camera, microphone or location for anything on the page.
const securityHeaders = [
  { key: "X-Frame-Options", value: "DENY" },
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "same-origin" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=(), payment=(), usb=()" },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  async headers() {
    return [{ source: "/:path*", headers: securityHeaders }];
  },
  // The test command builds into its own folder so a running demo keeps serving.
  distDir: process.env.NEXT_DIST_DIR || ".next",
  poweredByHeader: false,
  reactStrictMode: true,
  // forbidden() answers a signed-in person without the right role with a 403 page.
  experimental: { authInterrupts: true },
  serverExternalPackages: ["pg", "bcryptjs", "nodemailer", "pg-boss", "@alexanderolsen/libsamplerate-js"],
};

export default nextConfig;
