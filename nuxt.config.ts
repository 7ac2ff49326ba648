// Isthmus: Nuxt 4 app (app/), Nitro server routes (server/), pure engines shared by both (shared/).
export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', 'nuxt-auth-utils', '@vee-validate/nuxt'],
  css: ['@fontsource-variable/inter', '~/assets/css/main.css'],
  tailwindcss: { configPath: 'tailwind.config.ts', cssPath: false, viewer: false },
  // zod 4 schemas go through our own small adapter (app/utils/forms.ts), not a typed-schema package.
  veeValidate: { typedSchemaPackage: 'none' },
  typescript: { strict: true, typeCheck: false },
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
})
