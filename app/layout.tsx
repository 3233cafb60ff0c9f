import type { Metadata } from "next";
import { headers } from "next/headers";
import type { ReactNode } from "react";
import { display, mono, sans } from "./fonts";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Rillbook", template: "%s · Rillbook" },
  description: "Cataloguing, playback equalization and provenance for disc transfers.",
};

export default async function RootLayout({ children }: { children: ReactNode }) {
  // proxy.ts gives each page a Content-Security-Policy with a fresh script nonce. Reading
  // the request headers here renders every page per request, so Next.js can put that
  // nonce on its scripts (a page built ahead of time would carry none and be blocked).
  await headers();
  return (
    <html lang="en" className={`${sans.variable} ${display.variable} ${mono.variable}`}>
      <body className="min-h-screen">{children}</body>
    </html>
  );
}
