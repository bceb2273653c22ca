import type { Config } from "@react-router/dev/config";

export default {
  appDirectory: "app",
  ssr: true,
  // Every route is in the (cached) manifest module from the first page on. With lazy discovery a
  // fetcher's first load of a not-yet-known route awaits the manifest before it can be cancelled, so
  // two quick loads could both finish and the older answer could win (the region count on
  // /constraints showed the three-corner polygon after the fourth corner). The full manifest also
  // keeps the partial one out of every page's HTML.
  routeDiscovery: { mode: "initial" },
  // React Router 8's behaviour, adopted now so the build says nothing about it.
  future: {
    v8_middleware: true,
    v8_splitRouteModules: true,
    v8_viteEnvironmentApi: true,
    v8_passThroughRequests: true,
    v8_trailingSlashAwareDataRequests: true,
  },
} satisfies Config;
