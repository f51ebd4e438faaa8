# syntax=docker/dockerfile:1
#
# Lapse container image.
#
#   docker build -t lapse:0.1.0 .
#   docker run --rm -p 8080:8080 lapse:0.1.0
#
# Two stages: "build" compiles the TypeScript with the full dependency tree,
# "runtime" holds only production dependencies plus the compiled dist/.
# For reproducible releases, pin the base image by digest
# (node:20-bookworm-slim@sha256:...) in CI.

ARG NODE_IMAGE=node:20-bookworm-slim

# ---------------------------------------------------------------- build stage
FROM ${NODE_IMAGE} AS build
WORKDIR /src

# Manifests first so the dependency layer is reused while only sources change.
COPY package.json package-lock.json ./
RUN --mount=type=cache,target=/root/.npm \
    npm ci --no-audit --no-fund

# Exactly the inputs of tsconfig.build.json (include: server, routes, physics).
COPY tsconfig.json tsconfig.build.json ./
COPY server ./server
COPY routes ./routes
COPY physics ./physics
RUN npm run build

# -------------------------------------------------------------- runtime stage
FROM ${NODE_IMAGE} AS runtime

# Signal handling: Kubernetes has no equivalent of `docker run --init`, so the
# image carries its own tiny init. tini runs as PID 1, forwards SIGTERM/SIGINT
# to node (its only child) and reaps any zombies. node therefore never runs as
# PID 1, where the kernel's special signal rules would apply, and the app's own
# SIGTERM handler (drain /readyz, finish in-flight requests within
# SHUTDOWN_GRACE_MS) is what decides when the process exits.
RUN apt-get update \
 && apt-get install -y --no-install-recommends tini \
 && rm -rf /var/lib/apt/lists/*

WORKDIR /app
ENV NODE_ENV=production \
    PORT=8080 \
    HOST=0.0.0.0 \
    LOG_LEVEL=info \
    SHUTDOWN_GRACE_MS=10000

# Production dependencies only; lifecycle scripts are not needed at runtime.
COPY package.json package-lock.json ./
RUN --mount=type=cache,target=/root/.npm \
    npm ci --omit=dev --ignore-scripts --no-audit --no-fund

COPY --from=build /src/dist ./dist

# Application files stay owned by root and are read-only for the service
# account. A numeric UID (the "node" user of the official image) lets
# Kubernetes verify runAsNonRoot without resolving /etc/passwd.
USER 1000:1000

EXPOSE 8080

# Used by plain Docker / Compose; Kubernetes uses the probes in deploy/k8s.
# Slim images have no curl, so ask node itself (global fetch in Node 20).
HEALTHCHECK --interval=30s --timeout=5s --start-period=10s --retries=3 \
  CMD ["node", "-e", "fetch('http://127.0.0.1:' + (process.env.PORT || 8080) + '/healthz', { signal: AbortSignal.timeout(4000) }).then((r) => process.exit(r.ok ? 0 : 1), () => process.exit(1))"]

ENTRYPOINT ["/usr/bin/tini", "--"]
CMD ["node", "dist/server/start.js"]
