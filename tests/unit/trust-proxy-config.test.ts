import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../server/src/config/env';

const base = { DATABASE_URL: 'postgres://holdpoint@127.0.0.1:5432/holdpoint', SESSION_SECRET: 'unit-test-secret-0123456789', DATA_DIR: '.tmp/unit-config' };

describe('finding 4: the TRUST_PROXY setting', () => {
  it('when it is not set, then no proxy is trusted', () => {
    expect(loadConfig(base).TRUST_PROXY).toEqual([]);
  });

  it('when it lists addresses, subnets and named ranges, then the server gets that list', () => {
    expect(loadConfig({ ...base, TRUST_PROXY: ' loopback, 10.0.0.0/8 ,192.168.1.5,fd00::/8' }).TRUST_PROXY).toEqual(['loopback', '10.0.0.0/8', '192.168.1.5', 'fd00::/8']);
  });

  it.each(['true', '1', '*', '10.0.0.0/33', 'example.com', '10.0.0.0/8/8', '::1/129'])('when it is "%s", then the server refuses to start with a message naming the setting', (value) => {
    expect(() => loadConfig({ ...base, TRUST_PROXY: value })).toThrow(ConfigError);
    expect(() => loadConfig({ ...base, TRUST_PROXY: value })).toThrow(/TRUST_PROXY/);
  });
});
