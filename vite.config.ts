import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vite';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	ssr: {
		// Native and CommonJS-heavy server packages stay external to the server bundle; piscina starts
		// its threads from its own files, so it must stay an installed package too.
		external: ['sqlite3', 'sequelize', 'bullmq', 'ioredis', '@node-rs/bcrypt', 'nodemailer', 'smtp-server', 'piscina']
	}
});
