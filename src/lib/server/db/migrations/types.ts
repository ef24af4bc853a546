import type { QueryInterface, Transaction } from 'sequelize';

export interface Migration {
	id: string;
	up(qi: QueryInterface, transaction: Transaction): Promise<void>;
}
