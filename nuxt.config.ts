// Isthmus: Nuxt 4 app (app/), Nitro server routes (server/), pure engines shared by both (shared/).
export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', 'nuxt-auth-utils', '@vee-validate/nuxt', 'nuxt-security'],
  css: ['@fontsource-variable/inter', '~/assets/css/main.css'],
  tailwindcss: { configPath: 'tailwind.config.ts', cssPath: false, viewer: false },
  // zod 4 schemas go through our own small adapter (app/utils/forms.ts), not a typed-schema package.
  veeValidate: { typedSchemaPackage: 'none' },
  typescript: { strict: true, typeCheck: false },
  hooks: {
    // The barcode decoder (~110 KB gzip) is imported only when someone opens the camera or a photo;
    // without this, every scan page would ask the browser to prefetch it on arrival.
    'build:manifest'(manifest) {
      for (const [key, entry] of Object.entries(manifest)) if (key.includes('@zxing/')) entry.prefetch = false
    },
  },
  runtimeConfig: {
    // nuxt-auth-utils: sealed cookie; a shift is 12 hours. NUXT_SESSION_PASSWORD must be set in production.
    session: {
      maxAge: 60 * 60 * 12,
      password: '',
      cookie: { sameSite: 'lax' },
    },
    // Honour X-Forwarded-For only behind a known proxy (NUXT_TRUST_PROXY=1).
    trustProxy: false,
    public: { appName: 'Isthmus' },
  },
  app: {
    head: {
      title: 'Isthmus',
      htmlAttrs: { lang: 'en' },
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1, viewport-fit=cover' },
        { name: 'theme-color', content: '#12343B' },
        { name: 'description', content: 'Implant record for the operating room' },
      ],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
    },
  },
  nitro: {
    // No external fonts, analytics or CDNs: everything is served from here.
    compressPublicAssets: true,
  },
  experimental: { payloadExtraction: false },
  // Security headers and request limits (nuxt-security). Everything is served from this origin, so the
  // policy names 'self' only. CSRF is ours (server/middleware/csrf.ts), sign-in throttling is ours
  // (server/utils/throttle.ts), so the module's versions of both stay off.
  security: {
    // Per-response nonce on every <script>, <style> and <link> that SSR writes (Nuxt's inline config
    // script and its inlined component CSS included), so neither scripts nor styles need 'unsafe-inline'.
    nonce: true,
    headers: {
      contentSecurityPolicy: {
        'default-src': ["'none'"],
        'base-uri': ["'none'"],
        'connect-src': ["'self'"], // $fetch, the scan queue and the live case stream (EventSource)
        'font-src': ["'self'"],
        'form-action': ["'self'"],
        'frame-ancestors': ["'none'"],
        'frame-src': ["'none'"],
        'img-src': ["'self'", 'data:', 'blob:'], // blob: a photo of a label, decoded on the device
        'manifest-src': ["'self'"],
        'media-src': ["'self'", 'blob:'], // the camera preview, where a browser hands it over as a blob URL
        'object-src': ["'none'"],
        // 'self' and a nonce without 'strict-dynamic': every chunk Vite loads later is same-origin
        'script-src': ["'self'", "'nonce-{{nonce}}'"],
        'script-src-attr': ["'none'"],
        'style-src': ["'self'", "'nonce-{{nonce}}'"],
        'worker-src': ["'self'"],
        // relative URLs already follow the page's scheme; upgrading would break plain-http tests
        'upgrade-insecure-requests': false,
      },
      // Nothing is loaded from another origin, so the strictest isolation costs nothing.
      crossOriginEmbedderPolicy: 'require-corp',
      crossOriginOpenerPolicy: 'same-origin',
      crossOriginResourcePolicy: 'same-origin',
      referrerPolicy: 'no-referrer',
      // Browsers ignore HSTS received over plain http (RFC 6797 §8.1), so it is sent always and takes
      // effect once the app is reached over https. No includeSubDomains or preload: those bind hosts
      // the hospital's IT owns, not us.
      strictTransportSecurity: { maxAge: 31_536_000, includeSubdomains: false, preload: false },
      xContentTypeOptions: 'nosniff',
      xFrameOptions: 'DENY', // frame-ancestors 'none' for browsers that predate CSP 2
      // The Implants step uses the camera; everything else a page could ask for stays off.
      permissionsPolicy: {
        camera: ['self'],
        microphone: [],
        geolocation: [],
        'display-capture': [],
        fullscreen: [],
        payment: [],
        usb: [],
      },
    },
    // JSON bodies up to 1 MB; multipart uploads up to 8 MB (none yet: label photos are decoded on the
    // device). Larger is a 413 before any route reads the body.
    requestSizeLimiter: { maxRequestSizeInBytes: 1_000_000, maxUploadFileRequestInBytes: 8_000_000, throwError: true },
    rateLimiter: false,
    xssValidator: false, // it refuses real text (a name with a '<' in it); Vue escapes on output instead
    csrf: false,
    corsHandler: false, // same-origin only: no CORS headers, so browsers keep other sites from reading answers
    hidePoweredBy: true,
    removeLoggers: false, // keep client and SSR errors visible in the logs
  },
  routeRules: {
    // API answers are JSON, PDF, CSV or event streams, never pages: nothing in them may run or be framed.
    '/api/**': { headers: { 'content-security-policy': "default-src 'none'; frame-ancestors 'none'" } },
    // CSV files travel as JSON strings: room for the largest file each schema accepts (catalog 12 MB,
    // recall notice 900 kB) plus the escapes JSON adds to its line ends and quotes.
    '/api/catalog/import': { security: { requestSizeLimiter: { maxRequestSizeInBytes: 16_000_000 } } },
    '/api/recalls/*/import': { security: { requestSizeLimiter: { maxRequestSizeInBytes: 2_000_000 } } },
  },
})
