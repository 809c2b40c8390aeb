/** MQTT contracts shared by the server, the broker, the rig simulator and the app (no I/O here). */
export * from './topics';
export * from './payloads';
export * from './chamber';
export * from './broker-list';
