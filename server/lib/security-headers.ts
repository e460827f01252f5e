import type { RequestHandler } from 'express';
import helmet from 'helmet';

/**
 * Security headers on every answer (pages, the bundle, API JSON, renders), through helmet.
 *
 * The content security policy fits the Expo web export as built (dist/index.html): the bundle is
 * one external script from our origin (no inline script, so `script-src 'self'` and no eval);
 * the page has an inline `<style id="expo-reset">` and react-native-web writes its styles into
 * `<style>` elements and `style` attributes at run time, hence `style-src 'unsafe-inline'` (there is
 * no nonce to give a runtime style sheet). Fonts come from /assets (expo-font), images are our own
 * renders or data:/blob: URLs; the API is same-origin. Nothing may frame the app
 * (`frame-ancestors 'none'` and `X-Frame-Options: DENY` for older browsers). The billing flow leaves
 * by navigation (`location.assign`), which CSP does not restrict.
 *
 * Routes may set their own, stricter policy after this (SVG renders do: no scripts, sandboxed).
 */
export function contentSecurityPolicy(opts: { https: boolean }): Record<string, string[]> {
  return {
    'default-src': ["'self'"],
    'script-src': ["'self'"],
    'style-src': ["'self'", "'unsafe-inline'"],
    'img-src': ["'self'", 'data:', 'blob:'],
    'font-src': ["'self'", 'data:'],
    'connect-src': ["'self'"],
    'object-src': ["'none'"],
    'base-uri': ["'self'"],
    'form-action': ["'self'"],
    'frame-ancestors': ["'none'"],
    // Only behind HTTPS: on a plain-HTTP server it would send the browser to a port that is not there.
    ...(opts.https ? { 'upgrade-insecure-requests': [] } : {}),
  };
}

export function securityHeaders(publicUrl: string): RequestHandler {
  const https = new URL(publicUrl).protocol === 'https:';
  const headers = helmet({
    contentSecurityPolicy: { useDefaults: false, directives: contentSecurityPolicy({ https }) },
    frameguard: { action: 'deny' },
    // Same-origin pages still get the referrer (the cookie write guard can read it); other sites get none.
    referrerPolicy: { policy: 'same-origin' },
    // HSTS only means something over HTTPS (browsers ignore it on plain HTTP).
    strictTransportSecurity: https ? { maxAge: 180 * 24 * 3600 } : false,
    // Other sites may not embed our answers (a private render in an <img> of a same-site page
    // would go with the cookie); the public routes set `cross-origin` below.
    crossOriginResourcePolicy: { policy: 'same-origin' },
  });
  return (req, res, next) => {
    headers(req, res, (err?: unknown) => {
      if (err) return next(err);
      // Public results and figures are meant to be shown anywhere (outreach pages, slides online).
      if (req.path.startsWith('/api/public/')) res.setHeader('Cross-Origin-Resource-Policy', 'cross-origin');
      next();
    });
  };
}
