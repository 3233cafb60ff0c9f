/** @type {import('next').NextConfig} */
const nextConfig = {
  // The test command builds into its own folder so a running demo keeps serving.
  distDir: process.env.NEXT_DIST_DIR || ".next",
  poweredByHeader: false,
  reactStrictMode: true,
  // forbidden() answers a signed-in person without the right role with a 403 page.
  experimental: { authInterrupts: true },
  serverExternalPackages: ["pg", "bcryptjs", "nodemailer", "pg-boss", "@alexanderolsen/libsamplerate-js"],
};

export default nextConfig;
