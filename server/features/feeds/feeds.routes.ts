import { Router } from 'express';
import { publicBuilderParamsSchema } from '@shared/public/public-build.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { validate } from '../../http/validate';
import { builderFeed, siteFeed } from './feeds.service';
import { robotsTxt, sitemapXml } from './sitemap';

const ATOM = 'application/atom+xml; charset=utf-8';

/** Atom feeds under /feeds: the whole site and each builder. */
export function feedsRouter(config: Pick<Config, 'publicUrl'>) {
  const router = Router();
  router.get('/stories.atom', access.public, async (_req, res) => {
    res.set('Cache-Control', 'public, max-age=300');
    res.type(ATOM).send(await siteFeed(config.publicUrl));
  });
  router.get('/builders/:login.atom', access.public, validate({ params: publicBuilderParamsSchema }), async (req, res) => {
    res.set('Cache-Control', 'public, max-age=300');
    res.type(ATOM).send(await builderFeed(config.publicUrl, String(req.params.login)));
  });
  return router;
}

/** /sitemap.xml and /robots.txt, for search engines. */
export function crawlerRouter(config: Pick<Config, 'publicUrl'>) {
  const router = Router();
  router.get('/sitemap.xml', access.public, async (_req, res) => {
    res.set('Cache-Control', 'public, max-age=3600');
    res.type('application/xml; charset=utf-8').send(await sitemapXml(config.publicUrl));
  });
  router.get('/robots.txt', access.public, (_req, res) => {
    res.set('Cache-Control', 'public, max-age=86400');
    res.type('text/plain; charset=utf-8').send(robotsTxt(config.publicUrl));
  });
  return router;
}
