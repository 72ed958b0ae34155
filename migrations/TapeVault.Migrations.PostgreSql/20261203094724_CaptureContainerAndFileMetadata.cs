using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.PostgreSql.Migrations
{
    /// <inheritdoc />
    public partial class CaptureContainerAndFileMetadata : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<string>(
                name: "Container",
                table: "Captures",
                type: "character varying(8)",
                maxLength: 8,
                nullable: false,
                defaultValue: "wav");

            migrationBuilder.AddColumn<string>(
                name: "EmbeddedMetadata",
                table: "Captures",
                type: "text",
                nullable: false,
                defaultValue: "");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "Container",
                table: "Captures");

            migrationBuilder.DropColumn(
                name: "EmbeddedMetadata",
                table: "Captures");
        }
    }
}
