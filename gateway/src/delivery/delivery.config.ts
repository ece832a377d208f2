/** The delivery section of the config; its schema lives with the rest of the config (config/delivery.schema.ts). */
export { deliveryConfigSchema, type DeliveryConfig } from '../config/delivery.schema';
