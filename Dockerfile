# Multi-stage build: compile in the Rust image, run in a slim Debian image
# as an unprivileged user with the database on a volume.

FROM rust:1.95-bookworm AS build
WORKDIR /src
# The committed .sqlx/ query data lets the sqlx macros build offline.
ENV SQLX_OFFLINE=true
COPY Cargo.toml Cargo.lock build.rs ./
COPY .sqlx .sqlx
COPY migrations migrations
COPY templates templates
COPY static static
# The validation report embeds the published check values kept with the tests.
COPY tests/data tests/data
COPY src src
RUN cargo build --release --locked --bin juncture

FROM debian:bookworm-slim AS run
# curl serves the container health check only.
RUN apt-get update \
    && apt-get install -y --no-install-recommends ca-certificates curl \
    && rm -rf /var/lib/apt/lists/* \
    && groupadd --system --gid 10001 juncture \
    && useradd --system --uid 10001 --gid juncture --home-dir /data --shell /usr/sbin/nologin juncture \
    && mkdir -p /data \
    && chown juncture:juncture /data
COPY --from=build /src/target/release/juncture /usr/local/bin/juncture
USER juncture
WORKDIR /data
ENV JUNCTURE_DATABASE=/data/juncture.db \
    JUNCTURE_BIND=0.0.0.0:8080 \
    JUNCTURE_LOG=info,sqlx=warn
VOLUME ["/data"]
EXPOSE 8080
HEALTHCHECK --interval=30s --timeout=5s --start-period=10s --retries=3 \
    CMD curl --fail --silent --show-error http://127.0.0.1:8080/healthz || exit 1
STOPSIGNAL SIGTERM
ENTRYPOINT ["juncture"]
CMD ["serve"]
