# syntax=docker/dockerfile:1
#
# seqmon container image: build stage compiles TypeScript, the dashboard and
# better-sqlite3's native module; the runtime stage carries production
# dependencies only and runs as an unprivileged user.
#
#   docker build -t seqmon .
#   docker run --init -p 8080:8080 \
#     -e SEQMON_MQTT_URL=mqtt://broker.example:1883 -e SEQMON_HTTP_TOKEN=... \
#     -v seqmon-data:/var/lib/seqmon -v /srv/seqmon/seqmon.yaml:/etc/seqmon/seqmon.yaml:ro seqmon
#
# The image listens on 0.0.0.0 (SEQMON_HTTP_HOST); the configuration must
# then give http.tls or http.acknowledgeInsecureBind (see docs/configuration.md).

ARG NODE_IMAGE=node:20-bookworm-slim

# ---------------------------------------------------------------- build ----
FROM ${NODE_IMAGE} AS build
# better-sqlite3 compiles from source when no prebuilt binary can be fetched.
RUN apt-get update \
 && apt-get install -y --no-install-recommends python3 make g++ \
 && rm -rf /var/lib/apt/lists/*
WORKDIR /src
COPY package.json package-lock.json ./
RUN npm ci --no-audit --no-fund
COPY tsconfig.json tsconfig.build.json ./
COPY agent ./agent
COPY dashboard ./dashboard
COPY scripts ./scripts
COPY config ./config
RUN npm run build \
 && npm prune --omit=dev --no-audit --no-fund

# -------------------------------------------------------------- runtime ----
FROM ${NODE_IMAGE} AS runtime
# Environment overrides win over the file: the host makes the published port reachable, the data folder keeps
# everything on the volume. The port is left to the file (8080 by default); if you change it, set SEQMON_HTTP_PORT
# instead so the health check follows.
ENV NODE_ENV=production \
    SEQMON_HTTP_HOST=0.0.0.0 \
    SEQMON_DATA_DIR=/var/lib/seqmon
RUN groupadd --system seqmon \
 && useradd --system --gid seqmon --home-dir /var/lib/seqmon --no-create-home --shell /usr/sbin/nologin seqmon
WORKDIR /opt/seqmon
# Owned by root and read-only for the service user: the code cannot be changed by the process running it.
COPY --from=build /src/package.json ./package.json
COPY --from=build /src/node_modules ./node_modules
COPY --from=build /src/dist ./dist
# config/schema.json is read at run time (found two levels above dist/agent/config).
COPY --from=build /src/config ./config
COPY --from=build /src/config/container.yaml /etc/seqmon/seqmon.yaml
RUN chmod 0755 dist/agent/cli/seqmon.js \
 && ln -s /opt/seqmon/dist/agent/cli/seqmon.js /usr/local/bin/seqmon \
 && mkdir -p /var/lib/seqmon \
 && chown seqmon:seqmon /var/lib/seqmon \
 && chmod 0755 /etc/seqmon \
 && chmod 0644 /etc/seqmon/seqmon.yaml
USER seqmon
EXPOSE 8080
VOLUME ["/etc/seqmon", "/var/lib/seqmon"]
# No curl in the slim image: Node's fetch against /healthz (agent/runtime/healthcheck.ts).
HEALTHCHECK --interval=30s --timeout=5s --start-period=30s --retries=3 \
  CMD ["node", "/opt/seqmon/dist/agent/runtime/healthcheck.js"]
# `docker run IMAGE check-config /etc/seqmon/seqmon.yaml` runs another command.
ENTRYPOINT ["seqmon"]
CMD ["run", "--config", "/etc/seqmon/seqmon.yaml"]
