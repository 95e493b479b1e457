import { MemoryStore } from '../../../agent/stores/memory/memory-store.js';
import { trendStoreContract } from '../../contracts/trend-store-contract.js';

trendStoreContract('memory', async () => new MemoryStore(), { kind: 'memory' });
