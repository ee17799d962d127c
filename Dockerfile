# The container image named in the cluster recipes (README "Running on a cluster"):
#   docker build -t registry.example.org/hindcast:0.1.0 .
# Build stage: install the build tools, compile (TypeScript and the WebAssembly kernels) and pack
# the package exactly as `npm pack` gives it; then install that tarball with its runtime
# dependencies only. The final image holds Node 20 and the installed command, nothing else.
FROM node:20-bookworm-slim AS build
WORKDIR /src
COPY package.json package-lock.json ./
RUN npm ci --no-audit --no-fund
COPY tsconfig.json README.md ./
COPY scripts ./scripts
COPY config ./config
COPY bench ./bench
COPY src ./src
RUN npm pack --pack-destination /tmp \
 && npm install --global --prefix /opt/hindcast --omit=dev --no-audit --no-fund /tmp/hindcast-*.tgz

FROM node:20-bookworm-slim
COPY --from=build /opt/hindcast/lib/node_modules/hindcast /usr/local/lib/node_modules/hindcast
RUN ln -s ../lib/node_modules/hindcast/dist/src/cli/main.js /usr/local/bin/hindcast \
 && chmod +x /usr/local/lib/node_modules/hindcast/dist/src/cli/main.js \
 && hindcast --version
USER node
WORKDIR /data
CMD ["hindcast", "--help"]
