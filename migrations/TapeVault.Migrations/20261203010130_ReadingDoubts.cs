using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.Migrations
{
    /// <inheritdoc />
    public partial class ReadingDoubts : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<int>(
                name: "Doubts",
                table: "Candidates",
                type: "INTEGER",
                nullable: false,
                defaultValue: 0);
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "Doubts",
                table: "Candidates");
        }
    }
}
